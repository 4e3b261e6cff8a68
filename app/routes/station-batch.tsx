import { and, asc, eq } from "drizzle-orm";
import { randomUUID } from "node:crypto";
import { useState } from "react";
import { useTranslation } from "react-i18next";
import { data, Form, Link, redirect, useNavigation } from "react-router";
import { batches, products, readings, sites, users } from "~db/schema";
import { clock, countdown } from "~/components/batch-card";
import { Field, Notice } from "~/components/frame";
import { ReadingForm } from "~/components/reading-form";
import { useLiveNow } from "~/components/use-live-now";
import { CoolingChart } from "~/components/cooling-chart";
import { DepthTimePicture } from "~/components/depth-time-picture";
import { bandSeries, predictedSeries, sampleDepthTime, spreadByTemperature } from "~/lib/chart-data";
import { getRuleSet } from "~/lib/rule-sets";
import { toCelsius } from "~/lib/temperature";
import { assess, CorrectiveActionSchema, ReadingSchema, recordReading, takeCorrectiveAction } from "~/server/batches.server";
import { db } from "~/server/db.server";
import { isUuid, notFound } from "~/server/guards.server";
import { requireStationCook } from "~/server/station-entry.server";
import { getStationCookId, getStationDevice, stationAttribution } from "~/server/station.server";
import type { Route } from "./+types/station-batch";

export const meta: Route.MetaFunction = () => [{ title: "Batch · Chillwright" }];

export async function loader({ request, params }: Route.LoaderArgs) {
  const device = await getStationDevice(request);
  if (!device) throw redirect("/station");
  if (!isUuid(params.batchId)) notFound();
  const [row] = await db
    .select({ batch: batches, product: products.name, site: sites })
    .from(batches)
    .innerJoin(products, eq(products.id, batches.productId))
    .innerJoin(sites, eq(sites.id, batches.siteId))
    .where(and(eq(batches.id, params.batchId), eq(batches.siteId, device.siteId)));
  if (!row) notFound();
  const now = Date.now();
  const [a, rows] = await Promise.all([
    assess(row.site, row.batch.id, now),
    db
      .select({ r: readings, who: users.name })
      .from(readings)
      .leftJoin(users, eq(users.id, readings.enteredBy))
      .where(eq(readings.batchId, row.batch.id))
      .orderBy(asc(readings.takenAt)),
  ]);
  const url = new URL(request.url);
  // Plain series for the pictures: the readings are the record, the curve and band the model's.
  const sol = a!.solution;
  const record = rows.filter(({ r }) => !r.correctsReadingId).map(({ r }) => ({ t: r.takenAt.getTime(), c: r.valueC, late: r.late }));
  const from = record.at(-1)?.t ?? a!.originAt;
  // Far enough to show every deadline (provisional ones too) and when the model reaches the last limit, at most 12 h.
  const horizon = Math.max(...a!.prediction.stages.map((s) => Math.max(s.deadlineS ?? 0, s.highS ?? s.reachS ?? 0)));
  const until = Math.min(a!.originAt + 12 * 3600_000, Math.max(a!.originAt + horizon * 1000, now, from + 3600_000));
  const predicted = predictedSeries(sol, a!.originAt, from, until, 100);
  // Only the readings the model was fitted on (after a reheat or a move) bound its band.
  const band = bandSeries(sol, a!.originAt, predicted, spreadByTemperature(a!.prediction.stages), { readings: record.filter((r) => r.t >= a!.originAt) });
  const grid = sampleDepthTime(sol, a!.originAt, Math.max(now, from, a!.originAt + 600_000), 40, 20);
  const chartStages = a!.evaluation.stages.map((s, i) => ({
    label: `${s.stage}`,
    c: toCelsius(s.limit.value, s.limit.unit),
    deadline: s.deadline,
    status: s.status,
    predictedAt: a!.prediction.stages[i]?.reachS == null ? null : a!.originAt + a!.prediction.stages[i].reachS! * 1000,
  }));
  const rule = getRuleSet(row.batch.ruleSetCode)!;
  return {
    chart: { record, predicted, band, grid, stages: chartStages, dangerZone: { lowC: rule.stages.at(-1)!.to.c, highC: rule.stages[0].from.c } },
    now,
    cookActive: !!getStationCookId(request, device),
    attribution: getStationCookId(request, device) ? stationAttribution(request) : null,
    unit: row.site.temperatureUnit,
    timeZone: row.site.timeZone,
    clientId: randomUUID(),
    warnings: (url.searchParams.get("warn") ?? "").split(",").filter(Boolean),
    batch: { id: row.batch.id, product: row.product, lotCode: row.batch.lotCode, state: row.batch.state, startedAt: row.batch.startedAt.getTime(), startNotCaptured: row.batch.startNotCaptured },
    record: {
      outcome: a!.evaluation.outcome,
      nextStep: a!.evaluation.nextStep,
      stages: a!.evaluation.stages.map((s) => ({ stage: s.stage, limit: s.limit, deadline: s.deadline, status: s.status })),
    },
    prediction: {
      verdict: a!.prediction.verdict,
      originAt: a!.originAt,
      stages: a!.prediction.stages.map((s) => ({ reachS: s.reachS, lowS: s.lowS, highS: s.highS, probability: s.probability })),
      whatIfs: a!.prediction.alternatives.map((w) => ({ id: w.id, label: a!.alternativeLabels[w.id], verdict: w.verdict, finishS: w.finishS })),
    },
    readings: rows.map(({ r, who }) => ({
      id: r.id,
      value: r.valueEntered,
      unit: r.unitEntered,
      takenAt: r.takenAt.getTime(),
      late: r.late,
      kind: r.kind,
      who: who ?? (r.apiTokenId ? "API" : "—"),
      corrects: r.correctsReadingId,
      reason: r.correctionReason,
      photoId: r.photoId,
    })),
  };
}

const num = (v: FormDataEntryValue | null) => (v === null || v === "" ? undefined : Number(String(v).replace(",", ".")));
const issues = (error: { issues: { path: PropertyKey[]; message: string }[] }) => {
  const errors: Record<string, string> = {};
  for (const i of error.issues) errors[i.path.join(".")] ??= i.message;
  return errors;
};

export async function action({ request, params }: Route.ActionArgs) {
  const { site, entrant } = await requireStationCook(request);
  if (!isUuid(params.batchId)) notFound();
  const f = await request.formData();
  const intent = String(f.get("intent") ?? "reading");
  const fail = (errors: Record<string, string>, status = 400) => data({ intent, errors, warnings: [] as string[] }, { status });
  if (intent === "change" || intent === "discard") {
    const [batch] = await db.select({ method: batches.method }).from(batches).where(and(eq(batches.id, params.batchId), eq(batches.siteId, site.id)));
    if (!batch) notFound();
    const whatIf = String(f.get("whatIf") ?? "");
    const parsed = CorrectiveActionSchema.safeParse(
      intent === "change"
        ? { kind: "change_method", clientId: f.get("clientId"), method: whatIf === "lid-off" ? batch.method : whatIf, lid: false }
        : { kind: "discard", clientId: f.get("clientId"), quantityKg: num(f.get("quantityKg")), reason: f.get("reason") },
    );
    if (!parsed.success) return fail(issues(parsed.error));
    const result = await takeCorrectiveAction(site, entrant, params.batchId, parsed.data);
    if (!result.ok) return fail(result.errors, result.status);
    return data({ intent, errors: {} as Record<string, string>, warnings: [] as string[] });
  }
  const takenAt = f.get("takenAt");
  const parsed = ReadingSchema.safeParse({
    clientId: f.get("clientId"),
    value: num(f.get("value")),
    unit: site.temperatureUnit,
    takenAt: takenAt ? new Date(String(takenAt)).toISOString() : undefined,
    probe: f.get("probe") || undefined,
    kind: intent === "reheat" ? "reheat" : "reading",
  });
  if (!parsed.success) return fail(issues(parsed.error));
  const result = await recordReading(site, entrant, params.batchId, parsed.data);
  if (!result.ok) {
    if (result.status === 404) notFound();
    return fail(result.errors, result.status);
  }
  return data({ intent, errors: {} as Record<string, string>, warnings: result.warnings });
}

const statusTone = { met: "text-pine", missed: "text-ember", "in-progress": "text-amber", "not-started": "text-ink-soft", stopped: "text-ink-soft" } as const;

export default function StationBatch({ loaderData, actionData }: Route.ComponentProps) {
  const { t, i18n } = useTranslation();
  const { batch, record, prediction, readings: list, unit, timeZone, cookActive, clientId, chart, attribution } = loaderData;
  const now = useLiveNow(loaderData.now);
  const [correcting, setCorrecting] = useState<{ readingId: string; takenAt: number; label: string } | null>(null);
  const busy = useNavigation().state !== "idle";
  const errors: Record<string, string> = actionData?.errors ?? {};
  const warnings = [...loaderData.warnings, ...(actionData?.warnings ?? [])];
  const at = (s: number | null) => (s === null ? "—" : clock(prediction.originAt + s * 1000, timeZone, i18n.language));
  return (
    <main className="mx-auto w-full max-w-6xl px-4 py-6">
      <div className="mb-4 flex flex-wrap items-center justify-between gap-3">
        <div>
          <h1 className="text-2xl font-extrabold">{batch.product}</h1>
          <p className="text-ink-soft">
            {t("batch.lot")} {batch.lotCode} · {t(`batch.state.${batch.state}`)}
          </p>
        </div>
        <Link to="/station" className="btn-quiet">
          ← {t("station.back")}
        </Link>
      </div>
      {warnings.includes("startBelowUpperLimit") || batch.startNotCaptured ? <Notice tone="warn">{t("batch.startNotCaptured")}</Notice> : null}
      {warnings.includes("risingTemperature") ? <Notice tone="warn">{t("batch.rising")}</Notice> : null}
      {record.nextStep ? <Notice tone="error">{t(`batch.next.${record.nextStep}`)}</Notice> : null}

      <div className="grid gap-6 lg:grid-cols-[minmax(0,1fr)_26rem]">
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
          {prediction.whatIfs.length ? (
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
                    {cookActive && batch.state === "cooling" && w.id !== "shallower-pans" ? (
                      <Form method="post">
                        <input type="hidden" name="intent" value="change" />
                        <input type="hidden" name="whatIf" value={w.id} />
                        <input type="hidden" name="clientId" value={`${clientId}-${w.id}`} />
                        <button type="submit" className="btn-quiet min-h-12 px-4 text-sm" disabled={busy}>
                          {t("batch.doThisNow")}
                        </button>
                      </Form>
                    ) : null}
                  </li>
                ))}
              </ul>
            </div>
          ) : null}
          <p className="mt-4 text-sm text-ink-soft">{t("app.caution")}</p>
        </section>

        <section className="card" aria-labelledby="log">
          <h2 id="log" className="mb-3 text-lg font-extrabold">
            {t("batch.logReading")}
          </h2>
          {batch.state !== "cooling" ? <p>{t("batch.ended")}</p> : null}
          {batch.state === "cooling" && cookActive && attribution && record.nextStep !== "discard" ? (
            <>
              {record.nextStep === "reheat" ? <Notice tone="warn">{t("batch.reheatHint")}</Notice> : null}
              <ReadingForm batchId={batch.id} unit={unit} attribution={attribution} kind={record.nextStep === "reheat" ? "reheat" : "reading"} />
            </>
          ) : null}
          {batch.state === "cooling" && cookActive && record.nextStep ? (
            <Form method="post" className="mt-6 w-full border-t border-line pt-4">
              <h3 className="mb-2 font-extrabold">{t("batch.discard")}</h3>
              <input type="hidden" name="intent" value="discard" />
              <input type="hidden" name="clientId" value={`${clientId}-discard`} />
              <Field label={t("batch.quantityKg")} name="quantityKg" inputMode="decimal" error={errors.quantityKg} />
              <Field label={t("batch.discardReason")} name="reason" required error={errors.reason} />
              <button type="submit" className="btn-danger w-full" disabled={busy}>
                {t("batch.discardSubmit")}
              </button>
            </Form>
          ) : null}
          {batch.state !== "cooling" || cookActive ? null : (
            <Link to={`/station?next=${encodeURIComponent(`/station/batches/${batch.id}`)}`} className="btn-primary">
              {t("batch.pinToLog")}
            </Link>
          )}
        </section>
      </div>

      {correcting && attribution ? (
        <section className="card mt-6 max-w-md" aria-label={t("batch.correct")}>
          <ReadingForm key={correcting.readingId} batchId={batch.id} unit={unit} attribution={attribution} kind="reading" corrects={correcting} />
          <button type="button" className="btn-quiet mt-3 w-full" onClick={() => setCorrecting(null)}>
            {t("station.back")}
          </button>
        </section>
      ) : null}

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
              <th className="py-2" />
            </tr>
          </thead>
          <tbody>
            {list.map((r) => (
              <tr key={r.id} className="border-b border-line last:border-0">
                <td className="py-2">{clock(r.takenAt, timeZone, i18n.language)}</td>
                <td className="py-2 text-lg font-extrabold">
                  {r.value} °{r.unit}
                </td>
                <td className="py-2">{r.who}</td>
                <td className="py-2 text-sm">
                  {r.late ? <span className="mr-2 rounded bg-amber-light px-1 text-amber">{t("batch.late")}</span> : null}
                  {r.kind === "reheat" ? <span className="mr-2">{t("batch.reheat")}</span> : null}
                  {r.corrects ? t("batch.correction", { reason: r.reason }) : null}
                  {r.photoId ? (
                    <a href={`/photos/${r.photoId}`} target="_blank" rel="noreferrer">
                      <img src={`/photos/${r.photoId}/thumb`} alt={t("outbox.photo")} className="inline-block h-14 rounded-lg" />
                    </a>
                  ) : null}
                </td>
                <td className="py-2 text-right">
                  {cookActive && attribution && !r.corrects ? (
                    <button
                      type="button"
                      className="btn-quiet min-h-12 px-3 text-sm"
                      onClick={() => setCorrecting({ readingId: r.id, takenAt: r.takenAt, label: `${r.value} °${r.unit} · ${clock(r.takenAt, timeZone, i18n.language)}` })}
                    >
                      {t("batch.correct")}
                    </button>
                  ) : null}
                </td>
              </tr>
            ))}
          </tbody>
        </table>
      </section>
    </main>
  );
}
