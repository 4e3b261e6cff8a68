// QA's analytics: pass rates by product, method, equipment and shift (counted in PostgreSQL), and the
// time each batch took to reach its first stage limit (read off its probe readings by the rule
// evaluation, a page of batches at a time).
import { groupBy } from "~/lib/group-by";
import { and, asc, eq, inArray, sql } from "drizzle-orm";
import { batches, equipment, products, readings, sites } from "~db/schema";
import { binMinutes, MAX_TIMED, median, shifts, type Group, type Histogram, type ShiftCode } from "~/lib/analytics";
import { evaluateRuleSet } from "~/lib/engine/rules";
import { rangeInstants } from "~/lib/records-export";
import { getRuleSet } from "~/lib/rule-sets";
import { effectiveReadings } from "./batches.server";
import { db } from "./db.server";
import { endedBetween, passCounts } from "./pass-rate.server";

type Site = typeof sites.$inferSelect;
export type Period = { from: string; to: string };

/** Batches read per page when timing stage 1. */
const PAGE_SIZE = 500;

/** The shift a batch started in, by its local hour at the site; the boundaries come from app/lib/analytics.ts. */
const shiftOf = (timeZone: string) => {
  const hour = sql`extract(hour from ${batches.startedAt} at time zone ${timeZone})`;
  const when = shifts.map((s) => {
    const from = sql.raw(String(s.fromHour));
    const to = sql.raw(String(s.toHour));
    const inside = s.fromHour < s.toHour ? sql`${hour} >= ${from} and ${hour} < ${to}` : sql`(${hour} >= ${from} or ${hour} < ${to})`;
    return sql`when ${inside} then ${sql.raw(`'${s.code}'`)}`;
  });
  return sql<ShiftCode>`case ${sql.join(when, sql` `)} end`;
};

export type StageOneTimes = {
  /** Batches whose readings reached the stage-1 limit: minutes from the clock start to that reading. */
  reached: number;
  withinLimit: number;
  /** Ended without any reading at or below the stage-1 limit in their first attempt (or without a clock start). */
  neverReached: number;
  medianMinutes: number | null;
  histogram: Histogram;
  /** Batches under a rule set whose stage-1 time differs from the site's (binned all the same; judged on their own). */
  otherLimit: number;
  /** How many batches were timed: all the period's ended batches, or the first MAX_TIMED of them by end. */
  timed: number;
};

/**
 * For each ended batch of the period, the first attempt's stage 1 as the rule evaluation reads it from
 * the probe readings alone (no model estimate of the clock start): the minutes from the clock start to
 * the first reading at or below the limit, whether by the deadline or after it.
 */
async function stageOneTimes(site: Site, fromMs: number, toMs: number, now: number): Promise<StageOneTimes> {
  const siteRule = getRuleSet(site.ruleSetCode);
  const limitMinutes = siteRule?.stages[0].withinMinutes ?? 120;
  const minutes: number[] = [];
  let withinLimit = 0;
  let neverReached = 0;
  let otherLimit = 0;
  let timed = 0;
  let cursor: { at: string; id: string } | null = null;
  for (;;) {
    const page: { id: string; ruleSetCode: string; startedAt: Date; cursorAt: string }[] = await db
      .select({
        id: batches.id,
        ruleSetCode: batches.ruleSetCode,
        startedAt: batches.startedAt,
        // The exact timestamp as text: a JS Date would drop microseconds and break the keyset.
        cursorAt: sql<string>`${batches.endedAt}::text`,
      })
      .from(batches)
      .where(
        and(
          eq(batches.siteId, site.id),
          endedBetween(new Date(fromMs), new Date(toMs)),
          cursor ? sql`(${batches.endedAt}, ${batches.id}) > (${cursor.at}::timestamptz, ${cursor.id}::uuid)` : undefined,
        ),
      )
      .orderBy(asc(batches.endedAt), asc(batches.id))
      .limit(Math.min(PAGE_SIZE, MAX_TIMED - timed));
    if (page.length === 0) break;
    // Only the columns the rule and the corrections need: whole rows cost three times as much to read.
    const rows = await db
      .select({
        id: readings.id,
        batchId: readings.batchId,
        kind: readings.kind,
        valueEntered: readings.valueEntered,
        unitEntered: readings.unitEntered,
        valueC: readings.valueC,
        takenAt: readings.takenAt,
        receivedAt: readings.receivedAt,
        correctsReadingId: readings.correctsReadingId,
      })
      .from(readings)
      .where(inArray(readings.batchId, page.map((b) => b.id)));
    const byBatch = groupBy(rows, (r) => r.batchId);
    for (const b of page) {
      timed++;
      const rule = getRuleSet(b.ruleSetCode);
      if (!rule) {
        neverReached++;
        continue;
      }
      if (rule.stages[0].withinMinutes !== limitMinutes) otherLimit++;
      const counted = effectiveReadings(byBatch.get(b.id) ?? []);
      const evaluation = evaluateRuleSet(rule, {
        readings: counted.map((r) => ({ id: r.id, takenAt: r.takenAt.getTime(), value: r.valueEntered, unit: r.unitEntered, kind: r.kind })),
        batchStartedAt: b.startedAt.getTime(),
        siteUnit: site.temperatureUnit,
        now,
      });
      const stage = evaluation.attempts[0].stages[0];
      const readingId = stage.metBy ?? stage.reachedLateBy;
      const reading = readingId ? counted.find((r) => r.id === readingId) : undefined;
      if (!reading || stage.clockStartedAt === null) {
        neverReached++;
        continue;
      }
      minutes.push((reading.takenAt.getTime() - stage.clockStartedAt) / 60_000);
      if (stage.status === "met") withinLimit++;
    }
    if (page.length < PAGE_SIZE || timed >= MAX_TIMED) break;
    const last = page[page.length - 1];
    cursor = { at: last.cursorAt, id: last.id };
  }
  return { reached: minutes.length, withinLimit, neverReached, medianMinutes: median(minutes), histogram: binMinutes(minutes, limitMinutes), otherLimit, timed };
}

/** The pass rates of a site's batches that ended in the period, overall and by product, method, unit and shift. */
async function passRates(site: Site, fromMs: number, toMs: number) {
  const where = and(eq(batches.siteId, site.id), endedBetween(new Date(fromMs), new Date(toMs)));
  const shift = shiftOf(site.timeZone);
  const [[overall], byProduct, byMethod, byEquipment, byShift] = await Promise.all([
    db.select(passCounts()).from(batches).where(where),
    db
      .select({ key: products.id, name: products.name, ...passCounts() })
      .from(batches)
      .innerJoin(products, eq(products.id, batches.productId))
      .where(where)
      .groupBy(products.id),
    db
      .select({ key: batches.method, ...passCounts() })
      .from(batches)
      .where(where)
      .groupBy(batches.method),
    db
      .select({ key: equipment.id, name: equipment.name, ...passCounts() })
      .from(batches)
      .leftJoin(equipment, eq(equipment.id, batches.equipmentId))
      .where(where)
      .groupBy(equipment.id),
    // Grouped by the select's first column: the zone is a parameter, and PostgreSQL would not match
    // the same expression written twice with two placeholders.
    db.select({ key: shift, ...passCounts() }).from(batches).where(where).groupBy(sql`1`),
  ]);
  const sorted = (groups: Group[]) => groups.sort((a, b) => b.ended - a.ended || (a.name ?? a.key).localeCompare(b.name ?? b.key));
  return {
    overall,
    byProduct: sorted(byProduct),
    byMethod: sorted(byMethod.map((g) => ({ ...g, name: null }))),
    byEquipment: sorted(byEquipment.map((g) => ({ ...g, key: g.key ?? "none" }))),
    // Every shift, in the day's order, with nothing ended shown as none.
    byShift: shifts.map((s) => byShift.find((g) => g.key === s.code) ?? { key: s.code, ended: 0, passed: 0 }).map((g) => ({ ...g, name: null })),
  };
}

export async function getSiteAnalytics(site: Site, period: Period, now = Date.now()) {
  const { fromMs, toMs } = rangeInstants(period, site.timeZone);
  const [rates, stageOne] = await Promise.all([passRates(site, fromMs, toMs), stageOneTimes(site, fromMs, toMs, now)]);
  return { ...rates, stageOne: { ...stageOne, capped: rates.overall.ended > stageOne.timed } };
}

/** The sites where the user holds one of `roles`, within their own organisation only, by name. */
export async function comparedSites(user: { organisationId: string; memberships: { siteId: string; role: string }[] }, roles: readonly string[]) {
  const ids = user.memberships.filter((m) => roles.includes(m.role)).map((m) => m.siteId);
  if (!ids.length) return [];
  return db
    .select()
    .from(sites)
    .where(and(inArray(sites.id, ids), eq(sites.organisationId, user.organisationId)))
    .orderBy(asc(sites.name));
}

/** The organisation view: each site's overall pass rate and stage-1 times for the same dates, each on its own clock. */
export async function getOrganisationAnalytics(visible: Site[], period: Period, now = Date.now()) {
  return Promise.all(
    visible.map(async (site) => {
      const { fromMs, toMs } = rangeInstants(period, site.timeZone);
      const [[overall], stageOne] = await Promise.all([
        db.select(passCounts()).from(batches).where(and(eq(batches.siteId, site.id), endedBetween(new Date(fromMs), new Date(toMs)))),
        stageOneTimes(site, fromMs, toMs, now),
      ]);
      return {
        id: site.id,
        name: site.name,
        timeZone: site.timeZone,
        overall,
        stageOne: { timed: stageOne.timed, reached: stageOne.reached, withinLimit: stageOne.withinLimit, neverReached: stageOne.neverReached, medianMinutes: stageOne.medianMinutes, limitMinutes: stageOne.histogram.limitMinutes, capped: overall.ended > stageOne.timed },
      };
    }),
  );
}
