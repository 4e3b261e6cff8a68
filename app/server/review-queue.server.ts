import { and, asc, desc, eq, sql, type SQL } from "drizzle-orm";
import { z } from "zod";
import { actionConfirmations, batches, correctiveActions, products, readings, sites, verifications } from "~db/schema";
import { text } from "~/lib/forms";
import { defaultQueueQuery, firstDir, pageSizes, reviewReasons, sortKeys, type QueueQuery, type ReasonCode } from "~/lib/review-reasons";
import { db } from "./db.server";

/**
 * Each reason a batch needs a manager, as SQL over `batches` (joined to `sites` for the grace period).
 * The queue, the manager's home and later features share these, so a batch is counted the same way
 * everywhere. `now` is a parameter so a test or a sweep can ask "as of".
 */
export function reasonConditions(now: Date): Record<ReasonCode, SQL<boolean>> {
  const at = sql`${now.toISOString()}::timestamptz`;
  const readingCount = sql`(select count(*) from ${readings} where ${readings.batchId} = ${batches.id})`;
  const actionCount = sql`(select count(*) from ${correctiveActions} where ${correctiveActions.batchId} = ${batches.id})`;
  const signed = sql`exists (select 1 from ${verifications} where ${verifications.batchId} = ${batches.id})`;
  // The latest signature covers the record as it is now: as many entries and actions as it counted
  // (null when there is no signature).
  const covered = sql`(select ${verifications.readingsCovered} = ${readingCount} and ${verifications.actionsCovered} = ${actionCount} from ${verifications} where ${verifications.batchId} = ${batches.id} order by ${verifications.signedAt} desc limit 1)`;
  const ended = sql`${batches.state} <> 'cooling'`;
  const cooling = sql`${batches.state} = 'cooling'`;
  // A forecast says nothing more once the record shows a stage missed: the miss is the reason.
  const forecastOpen = sql`${batches.missedAt} is null`;
  return {
    // A discarded batch keeps its missed stage in the queue until a signature covers it.
    missed_stage: sql<boolean>`(${batches.missedAt} is not null and (${cooling} or (${batches.state} = 'discarded' and not coalesce(${covered}, false))))`,
    off_track: sql<boolean>`(${cooling} and ${forecastOpen} and ${batches.verdict} = 'behind')`,
    reading_overdue: sql<boolean>`(${cooling} and ${batches.nextReadingDueAt} + make_interval(mins => ${sites.overdueGraceMinutes}) < ${at})`,
    at_risk: sql<boolean>`(${cooling} and ${forecastOpen} and ${batches.verdict} = 'tight')`,
    action_to_confirm: sql<boolean>`exists (select 1 from ${correctiveActions} where ${correctiveActions.batchId} = ${batches.id} and not exists (select 1 from ${actionConfirmations} where ${actionConfirmations.correctiveActionId} = ${correctiveActions.id}))`,
    changed_after_signing: sql<boolean>`(${ended} and ${signed} and not coalesce(${covered}, false))`,
    awaiting_verification: sql<boolean>`(${ended} and not ${signed})`,
  };
}


// Each parameter is checked on its own, so one bad value falls back (and says so) without losing the rest.
const QueueParamSchemas = {
  sort: z.enum(sortKeys),
  dir: z.enum(["asc", "desc"]),
  reason: z.enum(reviewReasons.map((r) => r.code) as [ReasonCode, ...ReasonCode[]]),
  q: text().max(80),
  page: z.coerce.number().int().min(1).max(100_000),
  size: z.coerce.number().pipe(z.union(pageSizes.map((s) => z.literal(s)) as [z.ZodLiteral<10>, z.ZodLiteral<25>, z.ZodLiteral<50>])),
};
export type QueueParam = keyof typeof QueueParamSchemas;

/** The queue's query from the page's search parameters; `ignored` names each one that was not usable. */
export function parseQueueQuery(params: URLSearchParams): { query: QueueQuery; ignored: QueueParam[] } {
  const ignored: QueueParam[] = [];
  const read = <K extends QueueParam>(key: K): z.output<(typeof QueueParamSchemas)[K]> | undefined => {
    const raw = params.get(key);
    if (raw === null || raw === "") return undefined;
    const parsed = QueueParamSchemas[key].safeParse(raw);
    if (parsed.success) return parsed.data as z.output<(typeof QueueParamSchemas)[K]>;
    ignored.push(key);
    return undefined;
  };
  const sort = read("sort") ?? defaultQueueQuery.sort;
  const query: QueueQuery = {
    sort,
    dir: read("dir") ?? firstDir[sort],
    reason: read("reason") ?? null,
    q: read("q") ?? "",
    page: read("page") ?? 1,
    size: read("size") ?? defaultQueueQuery.size,
  };
  return { query, ignored };
}

/** `%`, `_` and the escape character itself match only themselves. */
export const escapeLike = (s: string) => s.replace(/[\\%_]/g, (c) => `\\${c}`);

export type QueueRow = {
  id: string;
  product: string;
  lotCode: string;
  state: "cooling" | "cooled" | "cooled_after_reheat" | "discarded";
  verdict: "ahead" | "tight" | "behind" | null;
  startedAt: number;
  nextReadingDueAt: number | null;
  missedAt: number | null;
  reasons: ReasonCode[];
};

/**
 * The site's batches that need a manager, worst first unless asked otherwise: one page of them, the
 * total that match, and how many carry each reason (for the filter chips). The page is clamped to the
 * last one; `clamped` says when that happened.
 */
export async function getReviewQueue(siteId: string, query: QueueQuery, now = new Date()) {
  const conditions = reasonConditions(now);
  const codes = reviewReasons.map((r) => r.code);
  const severity = sql<number>`greatest(${sql.join(
    reviewReasons.map((r) => sql`case when ${conditions[r.code]} then ${sql.raw(String(r.severity))} else 0 end`),
    sql`, `,
  )})`;
  const flagged = db.$with("flagged").as(
    db
      .select({
        id: batches.id,
        product: sql<string>`${products.name}`.as("product"),
        lotCode: batches.lotCode,
        state: batches.state,
        verdict: batches.verdict,
        startedAt: batches.startedAt,
        nextReadingDueAt: batches.nextReadingDueAt,
        missedAt: batches.missedAt,
        severity: severity.as("severity"),
        ...(Object.fromEntries(codes.map((c) => [c, sql<boolean>`${conditions[c]}`.as(c)])) as Record<ReasonCode, SQL.Aliased<boolean>>),
      })
      .from(batches)
      .innerJoin(products, eq(products.id, batches.productId))
      .innerJoin(sites, eq(sites.id, batches.siteId))
      .where(
        and(
          eq(batches.siteId, siteId),
          query.q ? sql`(${products.name} ilike ${`%${escapeLike(query.q)}%`} escape '\\' or ${batches.lotCode} ilike ${`%${escapeLike(query.q)}%`} escape '\\')` : undefined,
        ),
      ),
  );
  const needsManager = sql`${flagged.severity} > 0`;
  const matches = and(needsManager, query.reason ? sql`${flagged[query.reason]}` : undefined);

  const [counts] = await db
    .with(flagged)
    .select({
      all: sql<number>`count(*) filter (where ${needsManager})`.mapWith(Number),
      ...(Object.fromEntries(codes.map((c) => [c, sql<number>`count(*) filter (where ${flagged[c]})`.mapWith(Number)])) as Record<ReasonCode, SQL<number>>),
    })
    .from(flagged);
  const total = query.reason ? counts[query.reason] : counts.all;
  const pageCount = Math.max(1, Math.ceil(total / query.size));
  const page = Math.min(query.page, pageCount);

  const direction = query.dir === "asc" ? asc : desc;
  const order: SQL[] = {
    severity: [direction(flagged.severity), desc(flagged.startedAt)],
    started: [direction(flagged.startedAt)],
    product: [direction(flagged.product), asc(flagged.lotCode)],
    // Batches with nothing due (ended) go last whichever way.
    due: [sql`${flagged.nextReadingDueAt} ${sql.raw(query.dir)} nulls last`, desc(flagged.severity)],
  }[query.sort];
  const rows = await db
    .with(flagged)
    .select()
    .from(flagged)
    .where(matches)
    .orderBy(...order, asc(flagged.id))
    .limit(query.size)
    .offset((page - 1) * query.size);

  return {
    rows: rows.map(
      (r): QueueRow => ({
        id: r.id,
        product: r.product,
        lotCode: r.lotCode,
        state: r.state,
        verdict: r.verdict,
        startedAt: r.startedAt.getTime(),
        nextReadingDueAt: r.nextReadingDueAt?.getTime() ?? null,
        missedAt: r.missedAt?.getTime() ?? null,
        // Worst first, as the definitions are ordered.
        reasons: codes.filter((c) => r[c]),
      }),
    ),
    total,
    counts: counts as Record<ReasonCode | "all", number>,
    page,
    pageCount,
    clamped: page !== query.page,
  };
}
