import { and, asc, eq, gte, inArray, isNull, lt, or, sql } from "drizzle-orm";
import { alertDeliveries, alertEvents, alertRecipients, batches, memberships, products, sites, users } from "~db/schema";
import type { Assessment } from "~/lib/engine/assess";
import { recordAudit } from "./audit.server";
import { listActive, refreshSnapshot } from "./batches.server";
import { db, pool } from "./db.server";
import { env } from "./env.server";
import { awaitingVerification } from "./verification.server";
import { lastWeek, rangeInstants } from "~/lib/records-export";

export type AlertKind = (typeof alertEvents.$inferSelect)["kind"];
export const alertKinds: AlertKind[] = ["off_track", "stage_missed", "reading_overdue", "verification_digest", "weekly_records"];
/** Kinds sent to everyone on the list at once, never escalated and sent even when nobody acknowledges them. */
export const broadcastKinds: AlertKind[] = ["verification_digest", "weekly_records"];
type Site = typeof sites.$inferSelect;

/** Set by the worker when this process runs one, so a new delivery is queued at once (the sweep catches the rest). */
let enqueue: ((deliveryIds: string[]) => Promise<void>) | null = null;
export function setEnqueue(fn: typeof enqueue) {
  enqueue = fn;
}

/**
 * Who gets an alert kind at a site, in escalation order: the site's own list when it has one,
 * otherwise its active managers (then administrators) by name. Only people still active and still
 * members of the site with a role that may act on alerts.
 */
export async function recipientsFor(siteId: string, kind: AlertKind) {
  const [members, listed] = await Promise.all([alertMembers(siteId), savedLists(siteId, kind)]);
  return effectiveRecipients(members, listed, kind);
}

/** The site's active people who may receive some alert (managers, administrators, QA), by name. */
export function alertMembers(siteId: string) {
  return db
    .select({ id: users.id, name: users.name, email: users.email, language: users.language, role: memberships.role })
    .from(memberships)
    .innerJoin(users, eq(users.id, memberships.userId))
    .where(and(eq(memberships.siteId, siteId), eq(users.active, true), inArray(memberships.role, ["manager", "admin", "qa"])))
    .orderBy(asc(users.name));
}
type Member = Awaited<ReturnType<typeof alertMembers>>[number];

/** QA receives only the digest and the weekly records; managers and administrators receive every kind. */
export const mayReceive = (m: Pick<Member, "role">, kind: AlertKind) => broadcastKinds.includes(kind) || m.role !== "qa";

/** The saved lists of a site (one kind, or all), in order. */
export function savedLists(siteId: string, kind?: AlertKind) {
  return db
    .select()
    .from(alertRecipients)
    .where(and(eq(alertRecipients.siteId, siteId), kind ? eq(alertRecipients.kind, kind) : undefined))
    .orderBy(asc(alertRecipients.position));
}

/** A kind's recipients from the site's members and its saved lists: the list, else the managers, else the administrators. */
export function effectiveRecipients(members: Member[], listed: { kind: AlertKind; userId: string }[], kind: AlertKind) {
  const eligible = members.filter((m) => mayReceive(m, kind));
  const chosen = listed.filter((l) => l.kind === kind).map((l) => eligible.find((e) => e.id === l.userId)).filter((e) => e !== undefined);
  // A list whose people have all left or been deactivated falls back to the default, never to nobody.
  if (chosen.length) return chosen;
  // The weekly records go to QA by default; managers and administrators get them only when listed.
  if (kind === "weekly_records") return eligible.filter((e) => e.role === "qa");
  const managers = eligible.filter((e) => e.role === "manager");
  return managers.length ? managers : eligible.filter((e) => e.role === "admin");
}

/**
 * Raises an event once: the unique (site, kind, key) makes a second sweep, a second worker or a
 * retried request find it already there. The first recipient (every recipient, for a digest) gets a
 * delivery in the same transaction; escalation adds the next ones later.
 */
export async function raiseEvent(site: Site, input: { kind: AlertKind; key: string; batchId: string | null; detail: Record<string, unknown>; deadlineAt: number | null }) {
  const created = await db.transaction(async (tx) => {
    if (input.batchId) {
      // The sweep read the batch a moment ago; an entry may have ended it since.
      const [b] = await tx.select({ state: batches.state }).from(batches).where(eq(batches.id, input.batchId)).for("share");
      if (b?.state !== "cooling") return null;
    }
    const [ev] = await tx
      .insert(alertEvents)
      .values({ siteId: site.id, batchId: input.batchId, kind: input.kind, dedupeKey: input.key, detail: input.detail, deadlineAt: input.deadlineAt === null ? null : new Date(input.deadlineAt) })
      .onConflictDoNothing()
      .returning();
    if (!ev) return null;
    const recipients = await recipientsFor(site.id, input.kind);
    const first = broadcastKinds.includes(input.kind) ? recipients : recipients.slice(0, 1);
    const ds = first.length
      ? await tx.insert(alertDeliveries).values(first.map((r) => ({ eventId: ev.id, level: 0, userId: r.id, email: r.email }))).onConflictDoNothing().returning({ id: alertDeliveries.id })
      : [];
    await recordAudit(tx, { actor: { kind: "system", label: "alerts" }, organisationId: site.organisationId, siteId: site.id, action: `alert.${input.kind}`, entity: "alert_event", entityId: ev.id, data: { batchId: input.batchId, key: input.key, to: first.map((r) => r.id) } });
    return { event: ev, deliveries: ds.map((d) => d.id) };
  });
  if (created?.deliveries.length && enqueue) await enqueue(created.deliveries).catch(() => undefined);
  return created?.event ?? null;
}

/** Marks the open events of a batch resolved when their condition has cleared (no more escalation). */
async function resolve(batchId: string, kinds: AlertKind[], keep: string[], now: number) {
  await resolveEach(batchId, [{ kinds, keep }], now);
}

/** resolve() for several sets of kinds at once, each keeping its own keys: one statement. */
async function resolveEach(batchId: string, sets: { kinds: AlertKind[]; keep: string[] }[], now: number) {
  if (!sets.length) return;
  const each = sets.map(({ kinds, keep }) =>
    and(inArray(alertEvents.kind, kinds), keep.length ? sql`${alertEvents.dedupeKey} NOT IN (${sql.join(keep.map((k) => sql`${k}`), sql`, `)})` : sql`true`),
  );
  await db
    .update(alertEvents)
    .set({ resolvedAt: new Date(now) })
    .where(and(eq(alertEvents.batchId, batchId), isNull(alertEvents.resolvedAt), or(...each)));
}

/**
 * What a batch's assessment raises now: off track (the model says a stage will be missed), a missed
 * stage (the record says so), an overdue reading (past the site's interval plus its grace). Called
 * after every entry and by the sweep; each event fires once per attempt and stage (per due time for
 * readings), and clears when its condition does.
 */
export async function alertsForBatch(
  site: Site,
  batch: { id: string; state: string; lotCode: string },
  product: string,
  a: Assessment,
  lastReadingAt: number | null,
  now: number,
  raise = true,
) {
  const attempt = a.evaluation.attempts.length;
  const raised: string[] = [];
  const base = { product, lotCode: batch.lotCode, attempt };
  if (batch.state !== "cooling") {
    await resolve(batch.id, ["off_track", "stage_missed", "reading_overdue"], [], now);
    return raised;
  }
  // The record first: a missed stage is a fact, not a forecast.
  const missed = a.evaluation.stages.filter((s) => s.status === "missed");
  for (const s of missed) {
    const key = `${batch.id}:a${attempt}:s${s.stage}`;
    const ev = raise && (await raiseEvent(site, { kind: "stage_missed", key, batchId: batch.id, deadlineAt: s.deadline, detail: { ...base, stage: s.stage, limit: s.limit, nextStep: a.evaluation.nextStep } }));
    if (ev) raised.push(ev.id);
  }
  const missedKeys = missed.map((s) => `${batch.id}:a${attempt}:s${s.stage}`);
  // What clears is cleared at the end, every kind in one statement.
  const clear: { kinds: AlertKind[]; keep: string[] }[] = [];
  if (a.evaluation.nextStep === null) clear.push({ kinds: ["stage_missed"], keep: missedKeys });

  // The forecast: the first open stage the model expects to miss.
  const offKeys: string[] = [];
  if (a.prediction.verdict === "behind" && missed.length === 0) {
    const i = a.prediction.stages.findIndex((p) => p.probability !== null && p.probability < 0.5);
    const p = a.prediction.stages[i];
    const stage = a.evaluation.stages[i];
    if (p && stage) {
      const key = await offTrackKey(batch.id, `${batch.id}:a${attempt}:s${stage.stage}`, now);
      offKeys.push(key);
      const best = a.prediction.alternatives.find((w) => w.verdict !== "behind");
      const ev = raise && (await raiseEvent(site, {
        kind: "off_track",
        key,
        batchId: batch.id,
        deadlineAt: stage.deadline ?? (p.deadlineS === null ? null : a.originAt + p.deadlineS * 1000),
        detail: {
          ...base,
          stage: stage.stage,
          limit: stage.limit,
          predictedAt: p.reachS === null ? null : a.originAt + p.reachS * 1000,
          probability: p.probability,
          suggestion: best ? best.id : null,
        },
      }));
      if (ev) raised.push(ev.id);
    }
  }
  clear.push({ kinds: ["off_track"], keep: offKeys });

  // The routine: a reading is due every interval; past the grace it is overdue.
  const overdueKeys: string[] = [];
  if (lastReadingAt !== null) {
    const due = lastReadingAt + site.readingIntervalMinutes * 60_000;
    if (now > due + site.overdueGraceMinutes * 60_000) {
      const key = `${batch.id}:due${due}`;
      overdueKeys.push(key);
      const ev = raise && (await raiseEvent(site, { kind: "reading_overdue", key, batchId: batch.id, deadlineAt: due, detail: { ...base, lastReadingAt, graceMinutes: site.overdueGraceMinutes } }));
      if (ev) raised.push(ev.id);
    }
  }
  clear.push({ kinds: ["reading_overdue"], keep: overdueKeys });
  await resolveEach(batch.id, clear, now);
  return raised;
}

const REALERT_AFTER_MS = 30 * 60_000;

/**
 * Off track is a forecast: a batch that recovered and slips again is worth a new alert, but not one
 * per wobble of the verdict. The key gets an occurrence number; a new one starts only when the last
 * occurrence has cleared and was raised at least 30 minutes ago.
 */
async function offTrackKey(batchId: string, base: string, now: number) {
  const rows = await db
    .select({ key: alertEvents.dedupeKey, createdAt: alertEvents.createdAt, resolvedAt: alertEvents.resolvedAt })
    .from(alertEvents)
    .where(and(eq(alertEvents.batchId, batchId), eq(alertEvents.kind, "off_track"), sql`${alertEvents.dedupeKey} LIKE ${base + "%"}`))
    .orderBy(sql`${alertEvents.createdAt} DESC`)
    .limit(1);
  const last = rows[0];
  if (!last) return base;
  if (!last.resolvedAt || now - last.createdAt.getTime() < REALERT_AFTER_MS) return last.key;
  const n = Number(/#(\d+)$/.exec(last.key)?.[1] ?? 1);
  return `${base}#${n + 1}`;
}

/**
 * After an entry through the station or the API: clear what the entry settles (a reading came, the
 * batch is back on course or ended). Raising waits for the sweep and a quiet moment: a tablet sending
 * its queued entries, or a cook entering a morning's readings one after another, must not trigger an
 * "overdue" or "missed" that the next entry in the same burst disproves.
 */
export async function alertsAfterEntry(
  site: Site,
  batchId: string,
  a: Assessment | undefined,
  now = Date.now(),
  /** The batch as the caller has just settled it (its state, its last reading's time), when it has. */
  known?: { id: string; state: string; lotCode: string; product: string; last: number | null },
) {
  if (!a) return;
  const row = known ?? (await batchForAlerts(batchId));
  if (!row) return;
  await alertsForBatch(site, row, row.product, a, row.last, now, false).catch((e) => console.error("alerts after entry:", e));
}

async function batchForAlerts(batchId: string) {
  const [row] = await db
    .select({ id: batches.id, state: batches.state, lotCode: batches.lotCode, product: products.name, last: sql<Date | null>`(select max(taken_at) from readings r where r.batch_id = ${batches.id})` })
    .from(batches)
    .innerJoin(products, eq(products.id, batches.productId))
    .where(eq(batches.id, batchId));
  return row ? { ...row, last: row.last ? new Date(row.last).getTime() : null } : null;
}

/** Local calendar date and hour of an instant in a time zone. */
export function localDateHour(ms: number, timeZone: string) {
  const parts = Object.fromEntries(
    new Intl.DateTimeFormat("en-CA", { timeZone, year: "numeric", month: "2-digit", day: "2-digit", hour: "2-digit", hourCycle: "h23" }).formatToParts(ms).map((p) => [p.type, p.value]),
  );
  return { date: `${parts.year}-${parts.month}-${parts.day}`, hour: Number(parts.hour) };
}

/** Once a day, at the site's digest hour (its own time zone): the records waiting for a signature. */
async function digests(now: number) {
  const all = await db.select().from(sites);
  for (const site of all) {
    const { date, hour } = localDateHour(now, site.timeZone);
    if (hour < site.digestHour) continue;
    const [done] = await db.select({ id: alertEvents.id }).from(alertEvents).where(and(eq(alertEvents.siteId, site.id), eq(alertEvents.kind, "verification_digest"), eq(alertEvents.dedupeKey, date))).limit(1);
    if (done) continue;
    const waiting = await db
      .select({ id: batches.id, lotCode: batches.lotCode, product: products.name, endedAt: batches.endedAt, state: batches.state })
      .from(batches)
      .innerJoin(products, eq(products.id, batches.productId))
      .where(and(eq(batches.siteId, site.id), awaitingVerification))
      .orderBy(asc(batches.endedAt))
      .limit(51);
    if (!waiting.length) continue;
    await raiseEvent(site, {
      kind: "verification_digest",
      key: date,
      batchId: null,
      deadlineAt: null,
      detail: { date, count: waiting.length > 50 ? "50+" : waiting.length, batches: waiting.slice(0, 20).map((w) => ({ id: w.id, product: w.product, lotCode: w.lotCode, endedAt: w.endedAt?.getTime() ?? null, state: w.state })) },
    });
  }
}

/** The ISO week of a Monday (YYYY-MM-DD) as "2026-W48": the week that holds its Thursday. */
export function isoWeekKey(monday: string) {
  const thursday = new Date(Date.parse(`${monday}T00:00:00Z`) + 3 * 86_400_000);
  const year = thursday.getUTCFullYear();
  const week = Math.floor((thursday.getTime() - Date.UTC(year, 0, 1)) / (7 * 86_400_000)) + 1;
  return `${year}-W${String(week).padStart(2, "0")}`;
}

/**
 * Once a week, from the site's weekday and hour on (its own time zone), last week's records
 * (Monday to Sunday) go to the list. The key is the week reported, so a sweep later that week, or a
 * second process, finds the event already there. A week in which the site started no batch sends
 * nothing (as a day with nothing to sign sends no digest). The workbook is made when each e-mail is sent.
 */
async function weeklyRecords(now: number) {
  const all = await db.select().from(sites);
  const keys = await db
    .select({ siteId: alertEvents.siteId, key: alertEvents.dedupeKey })
    .from(alertEvents)
    .where(and(eq(alertEvents.kind, "weekly_records"), sql`${alertEvents.createdAt} > ${new Date(now - 8 * 86_400_000)}`));
  const sent = new Set(keys.map((k) => `${k.siteId}|${k.key}`));
  const due = (site: typeof sites.$inferSelect) => {
    const { date, hour } = localDateHour(now, site.timeZone);
    const weekday = ((new Date(`${date}T00:00:00Z`).getUTCDay() + 6) % 7) + 1;
    return !(weekday < site.weeklyRecordsWeekday || (weekday === site.weeklyRecordsWeekday && hour < site.weeklyRecordsHour));
  };
  for (const listed of all) {
    if (!due(listed)) continue;
    // The list was read at the start of a sweep over every site: a setting changed meanwhile counts.
    const [site] = await db.select().from(sites).where(eq(sites.id, listed.id));
    if (!site || !due(site)) continue;
    const week = lastWeek(site.timeZone, now);
    const key = isoWeekKey(week.from);
    if (sent.has(`${site.id}|${key}`)) continue;
    const { fromMs, toMs } = rangeInstants(week, site.timeZone);
    const [any] = await db.select({ id: batches.id }).from(batches).where(and(eq(batches.siteId, site.id), gte(batches.startedAt, new Date(fromMs)), lt(batches.startedAt, new Date(toMs)))).limit(1);
    if (!any) continue;
    await raiseEvent(site, { kind: "weekly_records", key, batchId: null, deadlineAt: null, detail: { week: key, from: week.from, to: week.to } });
  }
}

/**
 * An alert nobody acknowledged, whose last e-mail went out (or finally failed) at least the site's
 * escalation delay ago, goes to the next recipient on the list. One level at a time; never for a
 * digest, an acknowledged or a resolved event.
 */
async function escalate(now: number) {
  const open = await db
    .select({ event: alertEvents, site: sites })
    .from(alertEvents)
    .innerJoin(sites, eq(sites.id, alertEvents.siteId))
    .where(and(isNull(alertEvents.acknowledgedAt), isNull(alertEvents.resolvedAt), sql`${alertEvents.kind} NOT IN ('verification_digest', 'weekly_records')`, sql`${alertEvents.createdAt} > ${new Date(now - 2 * 86_400_000)}`));
  if (!open.length) return;
  const ds = await db.select().from(alertDeliveries).where(inArray(alertDeliveries.eventId, open.map((o) => o.event.id)));
  for (const { event, site } of open) {
    const mine = ds.filter((d) => d.eventId === event.id);
    if (!mine.length) continue;
    const level = Math.max(...mine.map((d) => d.level));
    const top = mine.filter((d) => d.level === level);
    // From when the last e-mail went out, or was queued if it has not gone (an outage, a refusal): a
    // delivery stuck in retries must not hold the next person back for hours.
    const since = Math.max(...top.map((d) => (d.status === "sent" ? d.sentAt!.getTime() : d.createdAt.getTime())));
    if (!(now - since >= site.escalateAfterMinutes * 60_000)) continue;
    const list = await recipientsFor(site.id, event.kind);
    const already = new Set(mine.map((d) => d.userId));
    const next = list.find((r, i) => i > level - 1 && !already.has(r.id));
    if (!next) continue;
    const [d] = await db.transaction(async (tx) => {
      const rows = await tx.insert(alertDeliveries).values({ eventId: event.id, level: level + 1, userId: next.id, email: next.email }).onConflictDoNothing().returning({ id: alertDeliveries.id });
      if (rows.length)
        await recordAudit(tx, { actor: { kind: "system", label: "alerts" }, organisationId: site.organisationId, siteId: site.id, action: "alert.escalated", entity: "alert_event", entityId: event.id, data: { level: level + 1, to: next.id } });
      return rows;
    });
    if (d && enqueue) await enqueue([d.id]).catch(() => undefined);
  }
}

/**
 * Deliveries that never reached the queue (the process stopped between the two) are queued again;
 * one left "sending" by a process that died mid-send is marked failed rather than sent twice, and
 * shows on the alerts screen for a person to retry.
 */
async function recover(now: number) {
  const stale = await db
    .select({ id: alertDeliveries.id })
    .from(alertDeliveries)
    .where(and(eq(alertDeliveries.status, "queued"), lt(alertDeliveries.createdAt, new Date(now - 30_000))));
  if (stale.length && enqueue) await enqueue(stale.map((s) => s.id)).catch(() => undefined);
  await db
    .update(alertDeliveries)
    .set({ status: "failed", lastError: "The worker stopped while sending; the outcome is unknown. Retry to send again." })
    .where(and(eq(alertDeliveries.status, "sending"), lt(alertDeliveries.claimedAt, new Date(now - 10 * 60_000))));
  // A delivery waiting for a retry whose job is gone from the queue (it expired mid-send) goes back in.
  const orphans = await db
    .update(alertDeliveries)
    .set({ status: "queued" })
    .where(
      and(
        eq(alertDeliveries.status, "retrying"),
        lt(alertDeliveries.claimedAt, new Date(now - 10 * 60_000)),
        sql`NOT EXISTS (SELECT 1 FROM pgboss.job j WHERE j.name = 'alert-mail' AND j.singleton_key = ${alertDeliveries.id}::text AND j.state IN ('created', 'retry', 'active'))`,
      ),
    )
    .returning({ id: alertDeliveries.id });
  if (orphans.length && enqueue) await enqueue(orphans.map((o) => o.id)).catch(() => undefined);
}

const SWEEP_LOCK = 7_734_201;

/**
 * One pass over everything time can change: active batches (the clock runs on without any entry),
 * digests, escalations and stranded deliveries. Any number of processes may call it; a session-level
 * advisory lock lets one sweep at a time, and the unique keys keep even concurrent sweeps from
 * raising an event twice.
 */
export async function sweep(now = Date.now()) {
  const client = await pool.connect();
  try {
    const { rows } = await client.query<{ ok: boolean }>("SELECT pg_try_advisory_lock($1) AS ok", [SWEEP_LOCK]);
    if (!rows[0]?.ok) return { swept: false, batches: 0 };
    try {
      const active = await db.selectDistinct({ siteId: batches.siteId }).from(batches).where(eq(batches.state, "cooling"));
      const siteRows = active.length ? await db.select().from(sites).where(inArray(sites.id, active.map((a) => a.siteId))) : [];
      const list = await listActive(siteRows, now, { fresh: true });
      for (const row of list) {
        // One batch that cannot be assessed or alerted must not stop the others, nor the digests.
        try {
          const site = siteRows.find((s) => s.id === row.batch.siteId)!;
          const last = row.readings.length ? Math.max(...row.readings.map((r) => r.takenAt.getTime())) : null;
          await refreshSnapshot(site, row.batch.id, row.assessment, now, undefined, { row: row.batch, lastReadingAt: last });
          const lastReceived = Math.max(row.batch.createdAt.getTime(), ...row.readings.map((r) => r.receivedAt.getTime()));
          await alertsForBatch(site, row.batch, row.product.name, row.assessment, last, now, now - lastReceived >= env.ALERT_SETTLE_SECONDS * 1000);
        } catch (e) {
          console.error(`alert sweep, batch ${row.batch.id}:`, e instanceof Error ? e.message : e);
        }
      }
      // Every batch still cooling was assessed just now, changed or not (one statement for all).
      if (list.length)
        await db
          .update(batches)
          .set({ assessedAt: new Date(now) })
          .where(and(inArray(batches.id, list.map((r) => r.batch.id)), eq(batches.state, "cooling")));
      // Batches that ended since the last pass: their open events are settled.
      await db
        .update(alertEvents)
        .set({ resolvedAt: new Date(now) })
        .where(and(isNull(alertEvents.resolvedAt), sql`${alertEvents.batchId} IN (SELECT id FROM batches WHERE state <> 'cooling')`));
      for (const step of [digests, weeklyRecords, escalate, recover]) await step(now).catch((e) => console.error(`alert sweep, ${step.name}:`, e instanceof Error ? e.message : e));
      return { swept: true, batches: list.length };
    } finally {
      await client.query("SELECT pg_advisory_unlock($1)", [SWEEP_LOCK]);
    }
  } finally {
    client.release();
  }
}

/** A person says they have the alert in hand: escalation stops. Recorded once, with who and when. */
export async function acknowledge(site: Site, userId: string, eventId: string, opts: { batchId?: string; now?: number } = {}) {
  const now = opts.now ?? Date.now();
  const mine = and(eq(alertEvents.id, eventId), eq(alertEvents.siteId, site.id), opts.batchId ? eq(alertEvents.batchId, opts.batchId) : undefined);
  return db.transaction(async (tx) => {
    const [ev] = await tx
      .update(alertEvents)
      .set({ acknowledgedAt: new Date(now), acknowledgedBy: userId })
      .where(and(mine, isNull(alertEvents.acknowledgedAt)))
      .returning();
    if (!ev) {
      const [existing] = await tx.select().from(alertEvents).where(mine);
      return existing ?? null;
    }
    await recordAudit(tx, { actor: { kind: "user", userId }, organisationId: site.organisationId, siteId: site.id, action: "alert.acknowledged", entity: "alert_event", entityId: ev.id });
    return ev;
  });
}

/** A delivery that finally failed (or whose outcome is unknown) is queued again by a person. */
export async function retryDelivery(site: Site, userId: string, deliveryId: string) {
  const [d] = await db.transaction(async (tx) => {
    const rows = await tx
      .update(alertDeliveries)
      .set({ status: "queued", lastError: null })
      .where(and(eq(alertDeliveries.id, deliveryId), eq(alertDeliveries.status, "failed"), sql`${alertDeliveries.eventId} IN (SELECT id FROM alert_events WHERE site_id = ${site.id})`))
      .returning({ id: alertDeliveries.id });
    if (rows.length) await recordAudit(tx, { actor: { kind: "user", userId }, organisationId: site.organisationId, siteId: site.id, action: "alert.retried", entity: "alert_delivery", entityId: deliveryId });
    return rows;
  });
  if (d && enqueue) await enqueue([d.id]).catch(() => undefined);
  return !!d;
}

/**
 * Replaces the recipient lists (each in order), all or nothing: every person must be able to receive
 * that kind at the site, or nothing changes. Returns the first kind that has someone who cannot.
 */
export async function setRecipients(site: Site, userId: string, lists: Record<AlertKind, string[]>): Promise<AlertKind | null> {
  const eligible = await alertMembers(site.id);
  const cleaned = {} as Record<AlertKind, string[]>;
  for (const kind of alertKinds) {
    const ok = new Set(eligible.filter((e) => mayReceive(e, kind)).map((e) => e.id));
    const unique = [...new Set(lists[kind] ?? [])];
    if (unique.some((id) => !ok.has(id))) return kind;
    cleaned[kind] = unique;
  }
  await db.transaction(async (tx) => {
    await tx.delete(alertRecipients).where(eq(alertRecipients.siteId, site.id));
    const rows = alertKinds.flatMap((kind) => cleaned[kind].map((id, i) => ({ siteId: site.id, kind, userId: id, position: i + 1 })));
    if (rows.length) await tx.insert(alertRecipients).values(rows);
    await recordAudit(tx, { actor: { kind: "user", userId }, organisationId: site.organisationId, siteId: site.id, action: "alert.recipients_set", entity: "site", entityId: site.id, data: cleaned });
  });
  return null;
}


/** The alerts a batch raised, newest first, for its page. */
export async function alertsOfBatch(siteId: string, batchId: string) {
  const rows = await db
    .select({ event: alertEvents, ackBy: users.name })
    .from(alertEvents)
    .leftJoin(users, eq(users.id, alertEvents.acknowledgedBy))
    .where(and(eq(alertEvents.siteId, siteId), eq(alertEvents.batchId, batchId)))
    .orderBy(sql`${alertEvents.createdAt} DESC`)
    .limit(20);
  return rows.map(({ event, ackBy }) => ({
    id: event.id,
    kind: event.kind,
    createdAt: event.createdAt.getTime(),
    deadlineAt: event.deadlineAt?.getTime() ?? null,
    acknowledgedAt: event.acknowledgedAt?.getTime() ?? null,
    resolvedAt: event.resolvedAt?.getTime() ?? null,
    ackBy,
  }));
}
