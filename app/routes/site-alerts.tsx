import { and, desc, eq, inArray, isNull, sql } from "drizzle-orm";
import { useTranslation } from "react-i18next";
import { data, Form, Link, useNavigation, useSearchParams } from "react-router";
import { z } from "zod";
import { alertDeliveries, alertEvents, batches, products, sites, users } from "~db/schema";
import { Field, Notice } from "~/components/frame";
import { fieldErrors } from "~/lib/forms";
import { siteTime } from "~/lib/site-time";
import { acknowledge, alertKinds, alertMembers, effectiveRecipients, retryDelivery, savedLists, setRecipients, type AlertKind } from "~/server/alerts.server";
import { recordAudit } from "~/server/audit.server";
import { db } from "~/server/db.server";
import { can, isUuid, requireRole } from "~/server/guards.server";
import type { Route } from "./+types/site-alerts";

export const meta: Route.MetaFunction = () => [{ title: "Alerts · Chillwright" }];

const FilterSchema = z.enum(["all", "open", "failed"]).catch("all");

export async function loader({ request, params }: Route.LoaderArgs) {
  const { site } = await requireRole(request, can.manageAlerts, params.siteId);
  const filter = FilterSchema.parse(new URL(request.url).searchParams.get("show") ?? "all");
  const where = [eq(alertEvents.siteId, site.id)];
  if (filter === "open") where.push(isNull(alertEvents.acknowledgedAt), isNull(alertEvents.resolvedAt));
  if (filter === "failed") where.push(sql`EXISTS (SELECT 1 FROM alert_deliveries d WHERE d.event_id = ${alertEvents.id} AND d.status IN ('failed', 'retrying'))`);
  const events = await db
    .select({ event: alertEvents, product: products.name, lotCode: batches.lotCode, ackBy: users.name })
    .from(alertEvents)
    .leftJoin(batches, eq(batches.id, alertEvents.batchId))
    .leftJoin(products, eq(products.id, batches.productId))
    .leftJoin(users, eq(users.id, alertEvents.acknowledgedBy))
    .where(and(...where))
    .orderBy(desc(alertEvents.createdAt))
    .limit(100);
  const deliveries = events.length
    ? await db
        .select({ d: alertDeliveries, name: users.name })
        .from(alertDeliveries)
        .innerJoin(users, eq(users.id, alertDeliveries.userId))
        .where(inArray(alertDeliveries.eventId, events.map((e) => e.event.id)))
        .orderBy(alertDeliveries.level)
    : [];
  const [members, listed] = await Promise.all([alertMembers(site.id), savedLists(site.id)]);
  const people = members.map(({ id, name, role }) => ({ id, name, role }));
  const effective = Object.fromEntries(alertKinds.map((k) => [k, effectiveRecipients(members, listed, k).map((r) => r.id)]));
  return {
    filter,
    timeZone: site.timeZone,
    timing: { escalateAfterMinutes: site.escalateAfterMinutes, digestHour: site.digestHour },
    people,
    lists: Object.fromEntries(alertKinds.map((k) => [k, listed.filter((l) => l.kind === k).map((l) => l.userId)])) as Record<AlertKind, string[]>,
    effective: effective as Record<AlertKind, string[]>,
    events: events.map(({ event, product, lotCode, ackBy }) => ({
      id: event.id,
      kind: event.kind,
      batchId: event.batchId,
      product,
      lotCode,
      detail: event.detail,
      createdAt: event.createdAt.getTime(),
      deadlineAt: event.deadlineAt?.getTime() ?? null,
      acknowledgedAt: event.acknowledgedAt?.getTime() ?? null,
      ackBy,
      resolvedAt: event.resolvedAt?.getTime() ?? null,
      deliveries: deliveries
        .filter(({ d }) => d.eventId === event.id)
        .map(({ d, name }) => ({ id: d.id, level: d.level, name, status: d.status, attempts: d.attempts, lastError: d.lastError, sentAt: d.sentAt?.getTime() ?? null })),
    })),
  };
}

const TimingSchema = z.object({
  escalateAfterMinutes: z.coerce.number({ error: "forms.number" }).int("forms.number").min(1, "forms.number").max(240, "forms.number"),
  digestHour: z.coerce.number({ error: "forms.number" }).int("forms.number").min(0, "forms.number").max(23, "forms.number"),
});

export async function action({ request, params }: Route.ActionArgs) {
  const { user, site } = await requireRole(request, can.manageAlerts, params.siteId);
  const f = await request.formData();
  const intent = String(f.get("intent") ?? "");
  const fail = (errors: Record<string, string>, status = 400) => data({ intent, ok: false, errors }, { status });
  const ok = () => data({ intent, ok: true, errors: {} as Record<string, string> });
  if (intent === "acknowledge") {
    const id = String(f.get("eventId") ?? "");
    if (!isUuid(id)) return fail({ eventId: "unknown alert" }, 404);
    const ev = await acknowledge(site, user.id, id);
    return ev ? ok() : fail({ eventId: "unknown alert" }, 404);
  }
  if (intent === "retry") {
    const id = String(f.get("deliveryId") ?? "");
    if (!isUuid(id)) return fail({ deliveryId: "unknown e-mail" }, 404);
    return (await retryDelivery(site, user.id, id)) ? ok() : fail({ deliveryId: "That e-mail is not waiting to be sent again" }, 409);
  }
  if (intent === "timing") {
    const parsed = TimingSchema.safeParse(Object.fromEntries(f));
    if (!parsed.success) return fail(fieldErrors(parsed.error));
    await db.transaction(async (tx) => {
      await tx.update(sites).set(parsed.data).where(eq(sites.id, site.id));
      await recordAudit(tx, { actor: { kind: "user", userId: user.id }, organisationId: site.organisationId, siteId: site.id, action: "site.alert_timing", entity: "site", entityId: site.id, data: { before: { escalateAfterMinutes: site.escalateAfterMinutes, digestHour: site.digestHour }, after: parsed.data } });
    });
    return ok();
  }
  if (intent === "recipients") {
    // Fields "order.<kind>.<userId>" hold a place in that kind's list, or nothing.
    const lists: Partial<Record<AlertKind, { id: string; at: number }[]>> = {};
    for (const [name, value] of f) {
      const m = /^order\.(\w+)\.([0-9a-f-]{36})$/.exec(name);
      if (!m || !alertKinds.includes(m[1] as AlertKind) || String(value) === "") continue;
      const at = Number(value);
      if (!Number.isInteger(at) || at < 1 || at > 50) return fail({ [m[1]]: "forms.number" });
      (lists[m[1] as AlertKind] ??= []).push({ id: m[2], at });
    }
    for (const kind of alertKinds) {
      const list = lists[kind] ?? [];
      if (new Set(list.map((l) => l.at)).size !== list.length) return fail({ [kind]: "alerts.errors.duplicatePosition" });
    }
    const ordered = Object.fromEntries(alertKinds.map((kind) => [kind, (lists[kind] ?? []).sort((a, b) => a.at - b.at).map((l) => l.id)])) as Record<AlertKind, string[]>;
    const refused = await setRecipients(site, user.id, ordered);
    if (refused) return fail({ [refused]: "alerts.errors.unknownPerson" });
    return ok();
  }
  return fail({ intent: "unknown action" });
}

const statusTone = { sent: "bg-pine-light text-pine", failed: "bg-ember-light text-ember", retrying: "bg-amber-light text-amber", queued: "bg-frost text-ink-soft", sending: "bg-frost text-ink-soft", skipped: "bg-frost text-ink-soft" } as const;

export default function SiteAlerts({ loaderData, actionData }: Route.ComponentProps) {
  const { t, i18n } = useTranslation();
  const { events, people, lists, effective, timing, timeZone, filter } = loaderData;
  const busy = useNavigation().state !== "idle";
  const [params] = useSearchParams();
  const errors: Record<string, string> = actionData?.errors ?? {};
  const when = (ms: number | null) => (ms === null ? "—" : siteTime(ms, timeZone, i18n.language));
  const tab = (value: string, label: string) => {
    const next = new URLSearchParams(params);
    next.set("show", value);
    return (
      <Link key={value} to={`?${next}`} aria-current={filter === value ? "page" : undefined} className={`min-h-12 rounded-xl border-2 px-4 py-2 font-bold ${filter === value ? "border-glacier bg-glacier text-white" : "border-line bg-white"}`}>
        {label}
      </Link>
    );
  };
  return (
    <div className="grid gap-6">
      <div>
        <h1 className="text-2xl font-extrabold tracking-tight">{t("alerts.title")}</h1>
        <p className="mt-1 max-w-3xl text-ink-soft">{t("alerts.intro")}</p>
      </div>
      {actionData?.ok && actionData.intent === "acknowledge" ? <Notice tone="ok">{t("alerts.ackThanks")}</Notice> : null}
      {actionData?.ok && (actionData.intent === "recipients" || actionData.intent === "timing") ? <Notice tone="ok">{t("alerts.saved")}</Notice> : null}
      {actionData && !actionData.ok ? <Notice tone="error">{t("forms.fixErrors")}</Notice> : null}
      <nav className="flex flex-wrap gap-2" aria-label={t("alerts.title")}>
        {tab("all", t("alerts.filterAll"))}
        {tab("open", t("alerts.filterOpen"))}
        {tab("failed", t("alerts.filterFailed"))}
      </nav>
      {events.length === 0 ? <p className="card">{t("alerts.none")}</p> : null}
      <ul className="grid gap-3" aria-label={t("alerts.title")}>
        {events.map((e) => (
          <li key={e.id} className="card grid gap-2" data-testid="alert-event">
            <div className="flex flex-wrap items-start justify-between gap-3">
              <div>
                <p className="text-lg font-extrabold">
                  {t(`alerts.kind.${e.kind}`)}
                  {e.product ? ` · ${e.product} (${t("alertMail.lot")} ${e.lotCode})` : ""}
                  {e.kind === "weekly_records" ? ` · ${(e.detail as { from?: string }).from} – ${(e.detail as { to?: string }).to}` : ""}
                </p>
                <p className="text-sm text-ink-soft">
                  {t("alerts.raised")}: {when(e.createdAt)}
                  {e.deadlineAt ? ` · ${t("alerts.deadline")}: ${when(e.deadlineAt)}` : ""}
                </p>
                {e.acknowledgedAt ? <p className="text-sm font-bold text-pine">✓ {t("alerts.acknowledged", { name: e.ackBy, time: when(e.acknowledgedAt) })}</p> : null}
                {e.resolvedAt && !e.acknowledgedAt ? <p className="text-sm text-ink-soft">{t("alerts.resolved", { time: when(e.resolvedAt) })}</p> : null}
              </div>
              <div className="flex flex-wrap gap-2">
                {e.batchId ? (
                  <Link to={`../batches/${e.batchId}`} relative="path" className="btn-quiet min-h-12 px-4">
                    {t("alerts.open")}
                  </Link>
                ) : null}
                {e.acknowledgedAt || e.resolvedAt || e.kind === "verification_digest" || e.kind === "weekly_records" ? null : (
                  <Form method="post">
                    <input type="hidden" name="intent" value="acknowledge" />
                    <input type="hidden" name="eventId" value={e.id} />
                    <button type="submit" className="btn-primary min-h-12 px-4" disabled={busy}>
                      {t("alerts.acknowledge")}
                    </button>
                  </Form>
                )}
              </div>
            </div>
            <div>
              <p className="text-sm font-bold text-ink-soft">{t("alerts.deliveries")}</p>
              {e.deliveries.length === 0 ? <p className="text-sm text-ember">{t("alerts.noRecipient")}</p> : null}
              <ul className="mt-1 grid gap-1">
                {e.deliveries.map((d) => (
                  <li key={d.id} className="flex flex-wrap items-center gap-2 text-sm">
                    <span className={`rounded px-2 py-0.5 font-bold ${statusTone[d.status]}`}>{d.status === "sent" ? "✓ " : d.status === "failed" ? "✗ " : ""}{t(`alerts.status.${d.status}`)}</span>
                    <span>
                      {d.name} · {t("alerts.level", { level: d.level })} · {t("alerts.attempts", { count: d.attempts })}
                      {d.sentAt ? ` · ${when(d.sentAt)}` : ""}
                    </span>
                    {d.lastError ? <span className="text-ember">{t("alerts.lastError", { error: d.lastError })}</span> : null}
                    {d.status === "failed" ? (
                      <Form method="post">
                        <input type="hidden" name="intent" value="retry" />
                        <input type="hidden" name="deliveryId" value={d.id} />
                        <button type="submit" className="btn-quiet min-h-12 px-3" disabled={busy}>
                          {t("alerts.retry")}
                        </button>
                      </Form>
                    ) : null}
                  </li>
                ))}
              </ul>
            </div>
          </li>
        ))}
      </ul>

      <section className="card" aria-labelledby="recipients">
        <h2 id="recipients" className="text-lg font-extrabold">
          {t("alerts.recipients")}
        </h2>
        <p className="mt-1 mb-4 max-w-3xl text-ink-soft">{t("alerts.recipientsHelp")}</p>
        <Form method="post" className="grid gap-6 lg:grid-cols-2">
          <input type="hidden" name="intent" value="recipients" />
          {(Object.keys(lists) as AlertKind[]).map((kind) => (
            <fieldset key={kind} className="rounded-xl border-2 border-line p-4">
              <legend className="px-2 font-extrabold">{t(`alerts.kind.${kind}`)}</legend>
              {kind === "weekly_records" ? <p className="mb-3 text-sm text-ink-soft">{t("weeklyRecords.alertsHelp")}</p> : null}
              {errors[kind] ? (
                <p className="field-error" role="alert">
                  {t(errors[kind])}
                </p>
              ) : null}
              <ul className="grid gap-2">
                {people
                  // QA may be on the digest's and the weekly records' lists only (as mayReceive says).
                  .filter((p) => kind === "verification_digest" || kind === "weekly_records" || p.role !== "qa")
                  .map((p) => {
                    const at = lists[kind].indexOf(p.id);
                    const shown = effective[kind].indexOf(p.id);
                    return (
                      <li key={p.id} className="flex items-center justify-between gap-3">
                        <label htmlFor={`order-${kind}-${p.id}`} className="text-base">
                          {p.name} <span className="text-sm text-ink-soft">· {t(`roles.${p.role}`)}</span>
                          {lists[kind].length === 0 && shown >= 0 ? <span className="text-sm text-ink-soft"> · {shown + 1}</span> : null}
                        </label>
                        <select id={`order-${kind}-${p.id}`} name={`order.${kind}.${p.id}`} defaultValue={at >= 0 ? String(at + 1) : ""} className="field w-48" aria-label={`${t("alerts.position")}: ${p.name}`}>
                          <option value="">{t("alerts.notListed")}</option>
                          {people.map((_, i) => (
                            <option key={i} value={String(i + 1)}>
                              {i + 1}
                            </option>
                          ))}
                        </select>
                      </li>
                    );
                  })}
              </ul>
            </fieldset>
          ))}
          <div className="lg:col-span-2">
            <button type="submit" className="btn-primary" disabled={busy}>
              {t("alerts.save")}
            </button>
          </div>
        </Form>
      </section>

      <section className="card max-w-2xl" aria-labelledby="timing">
        <h2 id="timing" className="mb-4 text-lg font-extrabold">
          {t("alerts.timing")}
        </h2>
        <Form method="post">
          <input type="hidden" name="intent" value="timing" />
          <Field label={t("alerts.escalateAfter")} name="escalateAfterMinutes" type="number" inputMode="numeric" defaultValue={timing.escalateAfterMinutes} error={errors.escalateAfterMinutes && t(errors.escalateAfterMinutes, { min: 1, max: 240 })} />
          <Field label={t("alerts.digestHour")} name="digestHour" type="number" inputMode="numeric" defaultValue={timing.digestHour} error={errors.digestHour && t(errors.digestHour, { min: 0, max: 23 })} />
          <button type="submit" className="btn-primary" disabled={busy}>
            {t("alerts.saveTiming")}
          </button>
        </Form>
      </section>
    </div>
  );
}
