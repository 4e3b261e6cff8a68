import { and, eq, inArray, sql } from "drizzle-orm";
import { createHash } from "node:crypto";
import { hostname } from "node:os";
import PgBoss from "pg-boss";
import { alertDeliveries, alertEvents, sites, users } from "~db/schema";
import { getI18n, isLanguage } from "~/lib/i18n";
import { siteTime } from "~/lib/site-time";
import { broadcastKinds, setEnqueue, sweep } from "./alerts.server";
import { db } from "./db.server";
import { env } from "./env.server";
import { sendMail } from "./mail.server";
import { composeWeeklyRecords, type WeeklyDetail } from "./weekly-records.server";

export const MAIL_QUEUE = "alert-mail";
// A short tag for this process (host and pid hashed, so /healthz shows nothing about the machine).
export const workerId = createHash("sha256").update(`${hostname()}:${process.pid}:${Date.now()}`).digest("hex").slice(0, 12);


type Detail = {
  product?: string;
  lotCode?: string;
  stage?: number;
  limit?: { value: number; unit: string };
  predictedAt?: number | null;
  probability?: number | null;
  suggestion?: string | null;
  nextStep?: string | null;
  lastReadingAt?: number;
  graceMinutes?: number;
  date?: string;
  count?: number | string;
  batches?: { id: string; product: string; lotCode: string; endedAt: number | null; state: string }[];
};

/** The words of one alert e-mail, in the recipient's language: batch, reason, deadline in site time, link. */
export function composeAlert(input: {
  kind: (typeof alertEvents.$inferSelect)["kind"];
  eventId: string;
  level: number;
  detail: Detail;
  deadlineAt: number | null;
  site: { id: string; name: string; timeZone: string };
  batchId: string | null;
  language: string;
  firstRecipient?: string;
  escalateAfterMinutes: number;
}) {
  const lang = isLanguage(input.language) ? input.language : "en";
  const t = getI18n(lang).t;
  const d = input.detail;
  const when = (ms: number | null | undefined) => (ms == null ? "—" : siteTime(ms, input.site.timeZone, lang));
  const limit = d.limit ? `${d.limit.value} °${d.limit.unit}` : "";
  const vars = { product: d.product, lot: d.lotCode, stage: d.stage, limit, deadline: when(input.deadlineAt), site: input.site.name };
  const base = new URL(env.APP_URL);
  const lines: string[] = [];
  let subject: string;
  let action: { label: string; url: string };
  if (input.kind === "verification_digest") {
    subject = t("alertMail.digest.subject", { count: Number(d.count) || 0, site: input.site.name, date: d.date, countText: String(d.count) });
    lines.push(t("alertMail.digest.intro", { countText: String(d.count), site: input.site.name }));
    for (const b of d.batches ?? []) lines.push(`• ${b.product} · ${t("alertMail.lot")} ${b.lotCode} · ${t(`batch.state.${b.state}`)} ${when(b.endedAt)}`);
    action = { label: t("alertMail.digest.action"), url: new URL(`/sites/${input.site.id}/review?reason=awaiting_verification`, base).toString() };
  } else {
    subject = t(`alertMail.${input.kind}.subject`, vars);
    lines.push(t(`alertMail.${input.kind}.reason`, vars));
    if (input.kind === "off_track") {
      if (d.predictedAt) lines.push(t("alertMail.off_track.forecast", { limit, time: when(d.predictedAt), pct: Math.round((d.probability ?? 0) * 100) }));
      if (d.suggestion) lines.push(t("alertMail.off_track.suggestion", { what: t(`whatIf.${d.suggestion}`, { defaultValue: d.suggestion }) }));
    }
    if (input.kind === "stage_missed" && d.nextStep) lines.push(t(`alertMail.stage_missed.next_${d.nextStep}`));
    if (input.kind === "reading_overdue") lines.push(t("alertMail.reading_overdue.last", { time: when(d.lastReadingAt), grace: d.graceMinutes }));
    lines.push(t("alertMail.deadline", { deadline: when(input.deadlineAt) }));
    lines.push(t("alertMail.acknowledge"));
    action = { label: t("alertMail.open"), url: new URL(`/sites/${input.site.id}/batches/${input.batchId}?alert=${input.eventId}`, base).toString() };
  }
  if (input.level > 0) {
    subject = `${t("alertMail.escalatedPrefix")} ${subject}`;
    lines.unshift(t("alertMail.escalated", { name: input.firstRecipient ?? "—", minutes: input.escalateAfterMinutes * input.level }));
  }
  lines.push(t("app.caution"));
  return { subject, lines, action };
}

class AlreadyHandled extends Error {}

/**
 * Sends one delivery. The row is claimed atomically (queued or retrying → sending) so two workers,
 * or a job queued twice, send it once; SMTP errors put it back to retrying and let the queue retry
 * with back-off, and the last allowed attempt leaves it failed, visible on the alerts screen.
 */
export async function deliver(deliveryId: string, attempt: { retryCount: number; retryLimit: number }) {
  const [claimed] = await db
    .update(alertDeliveries)
    .set({ status: "sending", claimedAt: new Date(), attempts: sql`${alertDeliveries.attempts} + 1` })
    .where(and(eq(alertDeliveries.id, deliveryId), inArray(alertDeliveries.status, ["queued", "retrying"])))
    .returning();
  if (!claimed) throw new AlreadyHandled();
  // Only this claim may settle the row (a job that outlived its expiry must not overwrite a newer one).
  const mine = and(eq(alertDeliveries.id, deliveryId), eq(alertDeliveries.status, "sending"), eq(alertDeliveries.claimedAt, claimed.claimedAt!));
  try {
    const [row] = await db
      .select({ event: alertEvents, site: sites, language: users.language })
      .from(alertEvents)
      .innerJoin(sites, eq(sites.id, alertEvents.siteId))
      .innerJoin(users, eq(users.id, claimed.userId))
      .where(eq(alertEvents.id, claimed.eventId));
    // An alert someone has in hand, or whose condition cleared while the e-mail waited (an SMTP outage,
    // an escalation queued just before the acknowledgement), is not sent late. A digest always goes.
    if (!broadcastKinds.includes(row.event.kind) && (row.event.acknowledgedAt || row.event.resolvedAt)) {
      await db.update(alertDeliveries).set({ status: "skipped", lastError: row.event.acknowledgedAt ? "Acknowledged before it was sent" : "The condition cleared before it was sent" }).where(mine);
      return;
    }
    let firstRecipient: string | undefined;
    if (claimed.level > 0) {
      const [first] = await db
        .select({ name: users.name })
        .from(alertDeliveries)
        .innerJoin(users, eq(users.id, alertDeliveries.userId))
        .where(and(eq(alertDeliveries.eventId, claimed.eventId), eq(alertDeliveries.level, 0)));
      firstRecipient = first?.name;
    }
    // The weekly records: the workbook is made now, for this recipient's language.
    const mail = row.event.kind === "weekly_records"
      ? await composeWeeklyRecords({ site: row.site, detail: row.event.detail as WeeklyDetail, language: row.language, deliveryId: claimed.id })
      : composeAlert({
      kind: row.event.kind,
      eventId: row.event.id,
      level: claimed.level,
      detail: row.event.detail as Detail,
      deadlineAt: row.event.deadlineAt?.getTime() ?? null,
      site: row.site,
      batchId: row.event.batchId,
      language: row.language,
      firstRecipient,
      escalateAfterMinutes: row.site.escalateAfterMinutes,
    });
    await sendMail({ to: claimed.email, ...mail });
    await db.update(alertDeliveries).set({ status: "sent", sentAt: new Date(), sentBy: workerId, lastError: null }).where(mine);
  } catch (e) {
    // A permanent refusal (an SMTP 5xx, such as an unknown mailbox) is not retried; the screen shows it.
    const permanent = typeof (e as { responseCode?: unknown }).responseCode === "number" && (e as { responseCode: number }).responseCode >= 500;
    const last = permanent || attempt.retryCount >= attempt.retryLimit;
    await db
      .update(alertDeliveries)
      .set({ status: last ? "failed" : "retrying", lastError: e instanceof Error ? e.message.slice(0, 500) : String(e).slice(0, 500) })
      .where(mine);
    if (permanent) return;
    throw e;
  }
}

let boss: PgBoss | null = null;
let timer: ReturnType<typeof setInterval> | null = null;

/**
 * Starts this process's part of the alert system: the PostgreSQL job queue (pg-boss) for e-mails,
 * its worker, and the sweep timer. Safe to run in every app process at once.
 */
export async function startAlertWorker() {
  if (boss) return boss;
  const b = new PgBoss({ connectionString: env.DATABASE_URL, max: 3, application_name: `chillwright-alerts ${workerId}` });
  b.on("error", (e) => console.error("alert queue:", e.message));
  // Two processes starting together can deadlock in pg-boss's own set-up; the loser tries again.
  for (let attempt = 1; ; attempt++) {
    try {
      await b.start();
      if (!(await b.getQueue(MAIL_QUEUE)))
        await b.createQueue(MAIL_QUEUE, { name: MAIL_QUEUE, policy: "stately", retryLimit: env.ALERT_RETRY_LIMIT, retryDelay: env.ALERT_RETRY_DELAY_SECONDS, retryBackoff: true, expireInSeconds: 120 });
      break;
    } catch (e) {
      if (attempt >= 5) throw e;
      await new Promise((r) => setTimeout(r, 300 * attempt + Math.random() * 500));
    }
  }
  const send = async (ids: string[]) => {
    for (const id of ids) await b.send(MAIL_QUEUE, { deliveryId: id }, { singletonKey: id, retryLimit: env.ALERT_RETRY_LIMIT, retryDelay: env.ALERT_RETRY_DELAY_SECONDS, retryBackoff: true });
  };
  setEnqueue(send);
  await b.work<{ deliveryId: string }>(MAIL_QUEUE, { pollingIntervalSeconds: env.ALERT_POLL_SECONDS, batchSize: 1, includeMetadata: true }, async ([job]) => {
    try {
      await deliver(job.data.deliveryId, { retryCount: job.retryCount, retryLimit: job.retryLimit });
    } catch (e) {
      if (e instanceof AlreadyHandled) return;
      throw e;
    }
  });
  const tick = () => sweep().catch((e) => console.error("alert sweep:", e instanceof Error ? e.message : e));
  timer = setInterval(tick, env.ALERT_SWEEP_SECONDS * 1000);
  timer.unref?.();
  void tick();
  boss = b;
  return b;
}

export async function stopAlertWorker() {
  if (timer) clearInterval(timer);
  timer = null;
  setEnqueue(null);
  await boss?.stop({ graceful: true, wait: true });
  boss = null;
}

