import { useTranslation } from "react-i18next";
import { data, Form, Link, redirect, useNavigation } from "react-router";
import { ActionsPanel, BatchHeading, BatchNotices, ChartSection, HistoryTable, SignaturesPanel, StagesPanel } from "~/components/batch-view";
import { CheckboxField } from "~/components/controls";
import { Notice } from "~/components/frame";
import { useLiveNow } from "~/components/use-live-now";
import { fieldErrors } from "~/lib/forms";
import { loadBatchView } from "~/server/batch-view.server";
import { siteTime } from "~/lib/site-time";
import { acknowledge, alertsOfBatch } from "~/server/alerts.server";
import { can, isUuid, notFound, requireRole } from "~/server/guards.server";
import { confirmAction, loadVerification, signBatch, STATEMENT_VERSION, VerificationActionSchema } from "~/server/verification.server";
import type { Route } from "./+types/site-batch";

export const meta: Route.MetaFunction = () => [{ title: "Batch · Chillwright" }];

export async function loader({ request, params }: Route.LoaderArgs) {
  const { user, site, role } = await requireRole(request, can.review, params.siteId);
  if (!isUuid(params.batchId)) notFound();
  const view = await loadBatchView(site.id, params.batchId);
  if (!view) notFound();
  const review = await loadVerification(site, view.batch, { id: user.id, role });
  const url = new URL(request.url);
  const done = url.searchParams.get("done");
  const alerts = await alertsOfBatch(site.id, params.batchId);
  return { ...view, review, siteId: site.id, signerName: user.name, statementVersion: STATEMENT_VERSION, done, alerts, alertId: url.searchParams.get("alert"), mayAcknowledge: can.manageAlerts.includes(role) };
}

export async function action({ request, params }: Route.ActionArgs) {
  const { user, site, role } = await requireRole(request, can.verify, params.siteId);
  if (!isUuid(params.batchId)) notFound();
  const form = Object.fromEntries(await request.formData());
  if (form.intent === "acknowledge") {
    // The alert e-mail's link lands here: acknowledging stops its escalation.
    const id = String(form.eventId ?? "");
    const ev = isUuid(id) ? await acknowledge(site, user.id, id, { batchId: params.batchId }) : null;
    if (!ev) return data({ intent: "acknowledge", actionId: "", errors: { form: "verify.errors.unknownAlert" } as Record<string, string> }, { status: 404 });
    return redirect(`/sites/${site.id}/batches/${params.batchId}?done=acknowledged`);
  }
  const target = { intent: String(form.intent ?? ""), actionId: String(form.actionId ?? "") };
  const parsed = VerificationActionSchema.safeParse(form);
  if (!parsed.success) return data({ ...target, errors: fieldErrors(parsed.error) }, { status: 400 });
  const input = parsed.data;
  const signer = { id: user.id, role };
  const result = input.intent === "sign" ? await signBatch(site, signer, params.batchId, input) : await confirmAction(site, signer, params.batchId, input);
  if (!result.ok) {
    if (result.status === 404) notFound();
    return data({ ...target, errors: result.errors }, { status: result.status });
  }
  return redirect(`/sites/${site.id}/batches/${params.batchId}?done=${input.intent === "sign" ? "signed" : "confirmed"}`);
}

const btn = "btn-primary min-h-12 w-full";
const statusStyle = {
  "not-ended": "bg-frost text-ink-soft",
  awaiting: "bg-glacier-light text-glacier-dark",
  signed: "bg-pine-light text-pine",
  "changed-after-signing": "bg-amber-light text-amber",
} as const;

export default function SiteBatch({ loaderData, actionData }: Route.ComponentProps) {
  const { t, i18n } = useTranslation();
  const { batch, record, readings, timeZone, review, siteId, done } = loaderData;
  const now = useLiveNow(loaderData.now);
  const busy = useNavigation().state !== "idle";
  const errors: Record<string, string> = actionData?.errors ?? {};
  const when = (ms: number) => new Intl.DateTimeFormat(i18n.language, { timeZone, dateStyle: "medium", timeStyle: "short" }).format(ms);
  const afterSigning = (ms: number) => review.firstSignedAt !== null && ms > review.firstSignedAt;
  const errorFor = (intent: string, actionId = "") => (actionData && actionData.intent === intent && (intent === "sign" || actionData.actionId === actionId) ? errors : {});
  const signErrors = errorFor("sign");
  const latest = review.signatures.at(-1);
  return (
    <div>
      <BatchHeading batch={batch}>
        <div className="flex flex-wrap items-center gap-3">
          <span className={`rounded-xl px-3 py-2 font-extrabold ${statusStyle[review.status]}`} data-testid="verification-status">
            {t(`verify.status.${review.status}`)}
          </span>
          <Link to={`/sites/${siteId}/review`} className="btn-quiet min-h-12">
            ← {t("verify.backToReview")}
          </Link>
        </div>
      </BatchHeading>
      {done === "signed" ? <Notice tone="ok">{t("verify.signedNotice")}</Notice> : null}
      {done === "confirmed" ? <Notice tone="ok">{t("verify.confirmedNotice")}</Notice> : null}
      {done === "acknowledged" ? <Notice tone="ok">{t("alerts.ackThanks")}</Notice> : null}
      <BatchNotices batch={batch} record={record} />
      {loaderData.alerts.length ? (
        <section className="card mb-6" aria-labelledby="batch-alerts">
          <h2 id="batch-alerts" className="mb-3 text-lg font-extrabold">
            {t("alerts.onBatch")}
          </h2>
          <ul className="grid gap-2">
            {loaderData.alerts.map((a) => (
              <li key={a.id} className={`flex flex-wrap items-center justify-between gap-3 rounded-xl p-3 ${a.id === loaderData.alertId ? "border-2 border-ember bg-ember-light" : "bg-frost"}`} data-testid="batch-alert">
                <span>
                  <span className="font-bold">{t(`alerts.kind.${a.kind}`)}</span>
                  <span className="block text-sm">
                    {t("alerts.raised")}: {siteTime(a.createdAt, timeZone, i18n.language)}
                    {a.deadlineAt ? ` · ${t("alerts.deadline")}: ${siteTime(a.deadlineAt, timeZone, i18n.language)}` : ""}
                  </span>
                  {a.acknowledgedAt ? <span className="block text-sm font-bold text-pine">✓ {t("alerts.acknowledged", { name: a.ackBy, time: siteTime(a.acknowledgedAt, timeZone, i18n.language) })}</span> : null}
                  {a.resolvedAt && !a.acknowledgedAt ? <span className="block text-sm text-ink-soft">{t("alerts.resolved", { time: siteTime(a.resolvedAt, timeZone, i18n.language) })}</span> : null}
                </span>
                {!a.acknowledgedAt && !a.resolvedAt && loaderData.mayAcknowledge ? (
                  <Form method="post">
                    <input type="hidden" name="intent" value="acknowledge" />
                    <input type="hidden" name="eventId" value={a.id} />
                    <button type="submit" className="btn-primary min-h-12 px-5" disabled={busy}>
                      {t("alerts.acknowledge")}
                    </button>
                  </Form>
                ) : null}
              </li>
            ))}
          </ul>
        </section>
      ) : null}

      <div className="grid gap-6 lg:grid-cols-[minmax(0,1fr)_26rem]">
        <StagesPanel view={loaderData} now={now} whatIfs={batch.state === "cooling"} />

        <section className="card self-start" aria-labelledby="verification">
          <h2 id="verification" className="mb-3 text-lg font-extrabold">
            {t("verify.panel")}
          </h2>
          {review.status === "changed-after-signing" && review.entriesSince ? (
            <Notice tone="warn">{t("verify.changedSince", review.entriesSince)}</Notice>
          ) : null}
          {signErrors.form ? <Notice tone="error">{t(signErrors.form)}</Notice> : null}
          {review.signing === "ready" ? (
            <Form method="post">
              <input type="hidden" name="intent" value="sign" />
              <input type="hidden" name="statementVersion" value={loaderData.statementVersion} />
              <input type="hidden" name="language" value={i18n.language} />
              <p className="label">{t("verify.statementLabel")}</p>
              <blockquote className="mb-4 rounded-xl border-l-8 border-glacier bg-frost px-4 py-3 text-base" data-testid="statement">
                {t(`verify.statementV${loaderData.statementVersion}`)}
              </blockquote>
              <CheckboxField
                label={t("verify.agree")}
                name="agree"
                aria-invalid={signErrors.agree ? true : undefined}
                aria-describedby={signErrors.agree ? "agree-error" : undefined}
              />
              {signErrors.agree ? (
                <p id="agree-error" className="-mt-4 mb-5 field-error" role="alert">
                  {t(signErrors.agree)}
                </p>
              ) : null}
              <div className="mb-5">
                <label htmlFor="f-comment" className="label">
                  {t("verify.comment")}
                </label>
                <textarea
                  id="f-comment"
                  name="comment"
                  rows={3}
                  maxLength={1000}
                  className="field py-3"
                  aria-invalid={signErrors.comment ? true : undefined}
                  aria-describedby={signErrors.comment ? "f-comment-hint f-comment-error" : "f-comment-hint"}
                />
                <p id="f-comment-hint" className="mt-1 text-sm text-ink-soft">
                  {t("verify.commentHint")}
                </p>
                {signErrors.comment ? (
                  <p id="f-comment-error" className="field-error" role="alert">
                    {t(signErrors.comment)}
                  </p>
                ) : null}
              </div>
              <p className="mb-3 text-sm text-ink-soft">{t("verify.signsAs", { name: loaderData.signerName })}</p>
              <button type="submit" className={btn} disabled={busy}>
                {review.status === "changed-after-signing" ? t("verify.signAgain") : t("verify.sign")}
              </button>
            </Form>
          ) : (
            <>
              {review.status === "signed" && latest ? <p className="mb-2 font-bold text-pine">✓ {t("verify.signedBy", { name: latest.signedBy, time: when(latest.signedAt) })}</p> : null}
              <p data-testid="why-no-signing">{review.signing === "unconfirmed" ? t("verify.why.unconfirmed", { count: review.unconfirmed }) : t(`verify.why.${review.signing}`)}</p>
            </>
          )}
        </section>
      </div>

      <ActionsPanel
        actions={review.actions}
        when={when}
        mark={(a) => (afterSigning(a.takenAt) ? <span className="ml-2 rounded bg-amber-light px-1 text-sm text-amber">{t("verify.afterSigning")}</span> : null)}
        extra={(a) => {
          const e = errorFor("confirm", a.id);
          return (
            <>
              {e.form ? <Notice tone="error">{t(e.form)}</Notice> : null}
              {a.ownAction ? <p className="mt-2 text-sm">{t("verify.ownAction")}</p> : null}
              {a.canConfirm ? (
                <Form method="post" className="mt-3 grid gap-3 sm:grid-cols-[minmax(0,1fr)_auto] sm:items-end">
                  <input type="hidden" name="intent" value="confirm" />
                  <input type="hidden" name="actionId" value={a.id} />
                  <div>
                    <label htmlFor={`note-${a.id}`} className="label">
                      {t("verify.confirmNote")}
                    </label>
                    <input id={`note-${a.id}`} name="note" maxLength={1000} className="field" aria-invalid={e.note ? true : undefined} />
                    {e.note ? (
                      <p className="field-error" role="alert">
                        {t(e.note)}
                      </p>
                    ) : null}
                  </div>
                  <button type="submit" className="btn-primary min-h-14" disabled={busy}>
                    {t("verify.confirm")}
                  </button>
                </Form>
              ) : null}
            </>
          );
        }}
      />
      <SignaturesPanel signatures={review.signatures} when={when} />

      <ChartSection view={loaderData} now={now} />
      <HistoryTable
        readings={readings}
        timeZone={timeZone}
        note={(r) => (afterSigning(r.receivedAt) ? <span className="mr-2 rounded bg-amber-light px-1 text-amber">{t("verify.afterSigning")}</span> : null)}
      />
    </div>
  );
}
