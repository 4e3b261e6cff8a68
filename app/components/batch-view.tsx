import { useTranslation } from "react-i18next";
import type { BatchView } from "~/server/batch-view.server";
import { clock, countdown } from "./batch-card";
import { CoolingChart } from "./cooling-chart";
import { DepthTimePicture } from "./depth-time-picture";
import { Notice } from "./frame";

// The parts of a batch page. Each renders read-only unless the page passes what it may do
// (a "do this now" button, a correction button), so an inspector's view can use them as they are.

type Reading = BatchView["readings"][number];
type WhatIf = BatchView["prediction"]["whatIfs"][number];

const statusTone = { met: "text-pine", missed: "text-ember", "in-progress": "text-amber", "not-started": "text-ink-soft", stopped: "text-ink-soft" } as const;

export function BatchHeading({ batch, children }: { batch: BatchView["batch"]; children?: React.ReactNode }) {
  const { t } = useTranslation();
  return (
    <div className="mb-4 flex flex-wrap items-center justify-between gap-3">
      <div>
        <h1 className="text-2xl font-extrabold">{batch.product}</h1>
        <p className="text-ink-soft">
          {t("batch.lot")} {batch.lotCode} · {t(`batch.state.${batch.state}`)}
        </p>
      </div>
      {children}
    </div>
  );
}

/** The start-not-captured, rising and missed-stage notices. */
export function BatchNotices({ batch, record, warnings = [] }: { batch: BatchView["batch"]; record: BatchView["record"]; warnings?: string[] }) {
  const { t } = useTranslation();
  return (
    <>
      {warnings.includes("startBelowUpperLimit") || batch.startNotCaptured ? <Notice tone="warn">{t("batch.startNotCaptured")}</Notice> : null}
      {warnings.includes("risingTemperature") ? <Notice tone="warn">{t("batch.rising")}</Notice> : null}
      {record.nextStep ? <Notice tone="error">{t(`batch.next.${record.nextStep}`)}</Notice> : null}
    </>
  );
}

/** Each stage with its deadline and the model's estimate, the verdict, the what-ifs and the caution. */
export function StagesPanel({
  view,
  now,
  whatIfs = true,
  whatIfAction,
}: {
  view: Pick<BatchView, "record" | "prediction" | "timeZone">;
  now: number;
  whatIfs?: boolean;
  whatIfAction?: (w: WhatIf) => React.ReactNode;
}) {
  const { t, i18n } = useTranslation();
  const { record, prediction, timeZone } = view;
  const at = (s: number | null) => (s === null ? "—" : clock(prediction.originAt + s * 1000, timeZone, i18n.language));
  return (
    <section className="card" aria-labelledby="stages">
      <div className="flex items-center justify-between gap-3">
        <h2 id="stages" className="text-lg font-extrabold">
          {t("batch.stages")}
        </h2>
        <span className="rounded-xl bg-frost px-3 py-1 font-extrabold" data-testid="verdict">
          {t(`verdict.${prediction.verdict}`)}
        </span>
      </div>
      <ol className="mt-3 grid gap-3">
        {record.stages.map((s, i) => {
          const p = prediction.stages[i];
          return (
            <li key={s.stage} className="rounded-xl bg-frost p-4">
              <p className="font-bold">
                {t("home.stage", { n: s.stage })}: {s.limit.value} °{s.limit.unit} · <span className={statusTone[s.status]}>{t(`stageStatus.${s.status}`)}</span>
              </p>
              <p className="text-base">
                {t("batch.deadline")}: <strong>{s.deadline ? clock(s.deadline, timeZone, i18n.language) : t("batch.clockNotStarted")}</strong>
                {s.deadline && s.status !== "met" ? ` (${countdown(s.deadline - now)})` : ""}
              </p>
              {p && s.status !== "met" ? (
                <p className="text-sm text-ink-soft">
                  {t("batch.predicted", { time: at(p.reachS), low: at(p.lowS), high: at(p.highS) })}
                  {p.probability !== null ? ` · ${t("batch.chance", { pct: Math.round(p.probability * 100) })}` : ""}
                </p>
              ) : null}
            </li>
          );
        })}
      </ol>
      {whatIfs && prediction.whatIfs.length ? (
        <div className="mt-5">
          <h3 className="font-extrabold">{t("batch.whatIfs")}</h3>
          <ul className="mt-2 grid gap-2">
            {prediction.whatIfs.map((w) => (
              <li key={w.id} className="flex flex-wrap items-center justify-between gap-3 rounded-xl border border-line px-4 py-2">
                <span>
                  <span className="font-bold">{t(`whatIf.${w.id}`, { defaultValue: w.label })}</span>
                  <span className="block text-sm">
                    {t(`verdict.${w.verdict}`)} · {t("batch.doneBy", { time: at(w.finishS) })}
                  </span>
                </span>
                {whatIfAction?.(w)}
              </li>
            ))}
          </ul>
        </div>
      ) : null}
      <p className="mt-4 text-sm text-ink-soft">{t("app.caution")}</p>
    </section>
  );
}

/** The cooling curve and the temperature through the depth of the food. */
export function ChartSection({ view, now }: { view: Pick<BatchView, "chart" | "batch" | "unit" | "timeZone">; now: number }) {
  const { t } = useTranslation();
  const { chart, batch, unit, timeZone } = view;
  return (
    <section className="card mt-6" aria-labelledby="curve">
      <h2 id="curve" className="mb-3 text-lg font-extrabold">
        {t("chart.title")}
      </h2>
      <CoolingChart
        readings={chart.record}
        predicted={chart.predicted}
        band={chart.band}
        stages={chart.stages.map((s) => ({ ...s, label: t("home.stage", { n: s.label }) }))}
        startedAt={batch.startedAt}
        now={now}
        unit={unit}
        timeZone={timeZone}
        dangerZone={chart.dangerZone}
        labels={{
          title: t("chart.title"),
          timeAxis: t("chart.time"),
          temperatureAxis: t("chart.temperature"),
          reading: t("chart.reading"),
          late: t("batch.late"),
          corrected: t("chart.corrected"),
          predicted: t("chart.predicted"),
          band: t("chart.band"),
          now: t("chart.now"),
          deadline: t("batch.deadline"),
          dangerZone: t("chart.dangerZone"),
          summaryReadings: t("chart.summaryReadings", { count: chart.record.length }),
          summaryNoReadings: t("chart.summaryNoReadings"),
          summaryPrediction: t("chart.summaryPrediction"),
        }}
      />
      <h3 className="mt-6 mb-2 font-extrabold">{t("picture.title")}</h3>
      <DepthTimePicture
        grid={chart.grid}
        limits={chart.stages.map((s) => s.c)}
        unit={unit}
        timeZone={timeZone}
        labels={{ title: t("picture.title"), timeAxis: t("chart.time"), depthAxis: t("picture.depth"), temperature: t("chart.temperature"), summary: t("picture.summary") }}
      />
    </section>
  );
}

const signedInPhoto = (id: string, size?: "thumb") => `/photos/${id}${size ? `/${size}` : ""}`;

/**
 * Every entry with its time, value, who made it and its notes. `note` adds a mark of the page's own
 * (e.g. "after signing"); `rowAction` a button at the end of the row; `photoHref` where a photo is
 * served (a share link has its own route).
 */
export function HistoryTable({
  readings,
  timeZone,
  note,
  rowAction,
  photoHref = signedInPhoto,
}: {
  readings: Reading[];
  timeZone: string;
  note?: (r: Reading) => React.ReactNode;
  rowAction?: (r: Reading) => React.ReactNode;
  photoHref?: (id: string, size?: "thumb") => string;
}) {
  const { t, i18n } = useTranslation();
  return (
    <section className="card mt-6 overflow-x-auto" aria-labelledby="history">
      <h2 id="history" className="mb-3 text-lg font-extrabold">
        {t("batch.history")}
      </h2>
      <table className="w-full min-w-[560px] text-left">
        <thead>
          <tr className="border-b border-line text-sm text-ink-soft">
            <th className="py-2">{t("batch.time")}</th>
            <th className="py-2">{t("batch.reading")}</th>
            <th className="py-2">{t("batch.by")}</th>
            <th className="py-2">{t("batch.notes")}</th>
            {rowAction ? <th className="py-2" /> : null}
          </tr>
        </thead>
        <tbody>
          {readings.map((r) => (
            <tr key={r.id} className="border-b border-line last:border-0">
              <td className="py-2">{clock(r.takenAt, timeZone, i18n.language)}</td>
              <td className="py-2 text-lg font-extrabold">
                {r.value} °{r.unit}
              </td>
              <td className="py-2">{r.who}</td>
              <td className="py-2 text-sm">
                {r.late ? <span className="mr-2 rounded bg-amber-light px-1 text-amber">{t("batch.late")}</span> : null}
                {note?.(r)}
                {r.kind === "reheat" ? <span className="mr-2">{t("batch.reheat")}</span> : null}
                {r.corrects ? t("batch.correction", { reason: r.reason }) : null}
                {r.photoId ? (
                  <a href={photoHref(r.photoId)} target="_blank" rel="noreferrer">
                    <img src={photoHref(r.photoId, "thumb")} alt={t("outbox.photo")} className="inline-block h-14 rounded-lg" />
                  </a>
                ) : null}
              </td>
              {rowAction ? <td className="py-2 text-right">{rowAction(r)}</td> : null}
            </tr>
          ))}
        </tbody>
      </table>
    </section>
  );
}

/** A corrective action in words: the move it made, or the discard and its reason. */
export function useDescribeAction() {
  const { t } = useTranslation();
  const method = (id: unknown) => t(`library.methods.${String(id)}`, { defaultValue: String(id) });
  return (a: { kind: string; detail: unknown }) => {
    const d = (a.detail ?? {}) as { method?: string; lid?: boolean; from?: { method?: string }; reason?: string; quantityKg?: number };
    if (a.kind === "change_method" && d.method === d.from?.method) return t("verify.action.lidOff");
    if (a.kind === "change_method") return t("verify.action.change_method", { from: method(d.from?.method), to: method(d.method) });
    if (a.kind === "discard") return d.quantityKg ? t("verify.action.discardQuantity", { quantity: d.quantityKg, reason: d.reason }) : t("verify.action.discard", { reason: d.reason });
    return a.kind;
  };
}

type ActionItem = { id: string; kind: string; detail: unknown; takenBy: string; takenAt: number; confirmation: { by: string; at: number; note: string | null } | null };

/** The batch's corrective actions and their confirmations; `mark` and `extra` add the page's own. */
export function ActionsPanel<A extends ActionItem>({ actions, when, mark, extra }: { actions: A[]; when: (ms: number) => string; mark?: (a: A) => React.ReactNode; extra?: (a: A) => React.ReactNode }) {
  const { t } = useTranslation();
  const describe = useDescribeAction();
  return (
    <section className="card mt-6 print:break-inside-avoid" aria-labelledby="actions">
      <h2 id="actions" className="mb-3 text-lg font-extrabold">
        {t("verify.actions")}
      </h2>
      {actions.length === 0 ? <p className="text-ink-soft">{t("verify.noActions")}</p> : null}
      <ul className="grid gap-3">
        {actions.map((a) => (
          <li key={a.id} className="rounded-xl bg-frost p-4" data-testid="corrective-action">
            <p className="font-bold">
              {describe(a)}
              {mark?.(a)}
            </p>
            <p className="text-sm text-ink-soft">{t("verify.takenBy", { name: a.takenBy, time: when(a.takenAt) })}</p>
            {a.confirmation ? (
              <p className="mt-2 text-base">
                <span className="font-bold text-pine">✓ {t("verify.confirmedBy", { name: a.confirmation.by, time: when(a.confirmation.at) })}</span>
                {a.confirmation.note ? <span className="block">{a.confirmation.note}</span> : null}
              </p>
            ) : (
              <p className="mt-2 font-bold text-amber">{t("verify.awaitingConfirmation")}</p>
            )}
            {extra?.(a)}
          </li>
        ))}
      </ul>
    </section>
  );
}

type SignatureItem = { id: string; signedBy: string; signedAt: number; statement: string; comment: string | null; readingsCovered: number; actionsCovered: number };

/** Every signature of the record, with the words signed and what it covered. */
export function SignaturesPanel({ signatures, when }: { signatures: SignatureItem[]; when: (ms: number) => string }) {
  const { t } = useTranslation();
  return (
    <section className="card mt-6 print:break-inside-avoid" aria-labelledby="signatures">
      <h2 id="signatures" className="mb-3 text-lg font-extrabold">
        {t("verify.signatures")}
      </h2>
      {signatures.length === 0 ? <p className="text-ink-soft">{t("verify.noSignatures")}</p> : null}
      <ol className="grid gap-3">
        {signatures.map((s) => (
          <li key={s.id} className="rounded-xl bg-frost p-4" data-testid="signature">
            <p className="font-bold">{t("verify.signedBy", { name: s.signedBy, time: when(s.signedAt) })}</p>
            <p className="mt-1 text-base">“{s.statement}”</p>
            {s.comment ? <p className="mt-1 text-base">{t("verify.commentShown", { comment: s.comment })}</p> : null}
            <p className="mt-1 text-sm text-ink-soft">{t("verify.covered", { readings: s.readingsCovered, actions: s.actionsCovered })}</p>
          </li>
        ))}
      </ol>
    </section>
  );
}
