import { and, asc, desc, eq, isNotNull, sql } from "drizzle-orm";
import { batches, equipment, products, sites } from "~db/schema";
import { assessTrend, TREND_RECENT } from "~/lib/equipment-learning";
import { db } from "./db.server";
import { endedBetween, passCounts } from "./pass-rate.server";
import { reasonConditions } from "./review-queue.server";

type Site = typeof sites.$inferSelect;

/**
 * Per unit of a site (or one unit): the mean ln s of its last TREND_RECENT ended batches and of the
 * ones before, in one query, with the trend rule of app/lib/equipment-trend.ts applied.
 */
export async function getEquipmentTrends(siteId: string, equipmentId?: string) {
  const ranked = db.$with("ranked").as(
    db
      .select({
        equipmentId: batches.equipmentId,
        fittedLnS: batches.fittedLnS,
        rank: sql<number>`row_number() over (partition by ${batches.equipmentId} order by ${batches.endedAt} desc, ${batches.id})`.as("rank"),
      })
      .from(batches)
      .where(and(eq(batches.siteId, siteId), isNotNull(batches.equipmentId), isNotNull(batches.fittedLnS), isNotNull(batches.endedAt), equipmentId ? eq(batches.equipmentId, equipmentId) : undefined)),
  );
  const recent = sql`${ranked.rank} <= ${TREND_RECENT}`;
  const rows = await db
    .with(ranked)
    .select({
      id: equipment.id,
      name: equipment.name,
      learnedSd: equipment.learnedSd,
      recentMean: sql<number | null>`avg(${ranked.fittedLnS}) filter (where ${recent})`.mapWith(Number),
      recentCount: sql<number>`count(*) filter (where ${recent})`.mapWith(Number),
      earlierMean: sql<number | null>`avg(${ranked.fittedLnS}) filter (where not ${recent})`.mapWith(Number),
      earlierCount: sql<number>`count(*) filter (where not ${recent})`.mapWith(Number),
    })
    .from(ranked)
    .innerJoin(equipment, eq(equipment.id, ranked.equipmentId))
    .groupBy(equipment.id)
    .orderBy(asc(equipment.name));
  return rows.map((r) => ({ id: r.id, name: r.name, trend: assessTrend({ ...r, recentMean: r.recentCount ? r.recentMean : null, earlierMean: r.earlierCount ? r.earlierMean : null }) }));
}

/**
 * The manager's "today at a glance": what is cooling and its forecast, this week's first-time pass
 * rate (batches that ended since Monday 00:00 in the site's time zone), how many are at risk or have
 * a reading overdue now, and the units cooling slower than they used to. A handful of queries,
 * whatever the number of batches.
 */
export async function getGlance(site: Site, now = new Date()) {
  const reasons = reasonConditions(now);
  const at = sql`${now.toISOString()}::timestamptz`;
  const weekStart = sql`(date_trunc('week', ${at} at time zone ${site.timeZone}) at time zone ${site.timeZone})`;
  const [active, [week], [counts], trends] = await Promise.all([
    db
      .select({ id: batches.id, product: products.name, lotCode: batches.lotCode, verdict: batches.verdict, startedAt: batches.startedAt, nextReadingDueAt: batches.nextReadingDueAt })
      .from(batches)
      .innerJoin(products, eq(products.id, batches.productId))
      .where(and(eq(batches.siteId, site.id), eq(batches.state, "cooling")))
      .orderBy(asc(batches.startedAt))
      .limit(50),
    db
      .select(passCounts())
      .from(batches)
      .where(and(eq(batches.siteId, site.id), endedBetween(weekStart))),
    db
      .select({
        atRisk: sql<number>`count(*) filter (where ${reasons.off_track} or ${reasons.at_risk})`.mapWith(Number),
        overdue: sql<number>`count(*) filter (where ${reasons.reading_overdue})`.mapWith(Number),
      })
      .from(batches)
      .innerJoin(sites, eq(sites.id, batches.siteId))
      .where(and(eq(batches.siteId, site.id), eq(batches.state, "cooling"))),
    getEquipmentTrends(site.id),
  ]);
  return {
    active: active.map((b) => ({ ...b, startedAt: b.startedAt.getTime(), nextReadingDueAt: b.nextReadingDueAt?.getTime() ?? null })),
    week,
    atRisk: counts.atRisk,
    overdue: counts.overdue,
    slower: trends.filter((e) => e.trend.status === "slower"),
  };
}

/** One unit of the site with what it has learned, or undefined (another site's unit is not found). */
export async function getUnit(siteId: string, equipmentId: string) {
  const [unit] = await db
    .select({ id: equipment.id, name: equipment.name, method: equipment.method, active: equipment.active, learnedLnS: equipment.learnedLnS, learnedSd: equipment.learnedSd, learnedBatches: equipment.learnedBatches })
    .from(equipment)
    .where(and(eq(equipment.id, equipmentId), eq(equipment.siteId, siteId)));
  return unit;
}

/** The batches a unit learned from (each fitted on its readings when it ended), newest first; the page is clamped to the last. */
export async function getLearnedFrom(siteId: string, equipmentId: string, askedPage: number, size: number) {
  const where = and(eq(batches.siteId, siteId), eq(batches.equipmentId, equipmentId), isNotNull(batches.fittedLnS));
  const [{ count }] = await db.select({ count: sql<number>`count(*)`.mapWith(Number) }).from(batches).where(where);
  const page = Math.min(askedPage, Math.max(1, Math.ceil(count / size)));
  const rows = await db
    .select({ id: batches.id, endedAt: batches.endedAt, product: products.name, lotCode: batches.lotCode, fittedLnS: batches.fittedLnS })
    .from(batches)
    .innerJoin(products, eq(products.id, batches.productId))
    .where(where)
    .orderBy(desc(batches.endedAt), asc(batches.id))
    .limit(size)
    .offset((page - 1) * size);
  return { count, page, rows: rows.map((r) => ({ ...r, endedAt: r.endedAt?.getTime() ?? null, factor: Math.exp(r.fittedLnS!) })) };
}
