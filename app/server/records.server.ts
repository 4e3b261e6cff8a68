// The records view: every batch of one site (or of several, for QA) started in a range of local
// dates, filtered, sorted and paged in PostgreSQL, with the totals and the first-time pass rate of
// everything that matches. Each row's stages are evaluated from its readings, as the batch page does.
import { groupBy } from "~/lib/group-by";
import { and, asc, desc, eq, gte, inArray, lt, or, sql, type SQL } from "drizzle-orm";
import { z } from "zod";
import { batches, correctiveActions, equipment, memberships, products, readings, sites, users, verifications } from "~db/schema";
import { coolingMethodIds } from "~/lib/engine/equipment";
import { ExportRangeSchema, localDateOf, rangeInstants } from "~/lib/records-export";
import { recordFirstDir, recordOutcomes, recordPageSizes, recordSortKeys, type RecordRow, type RecordsQuery, type RecordTotals } from "~/lib/records-query";
import { fromCelsius, toCelsius } from "~/lib/temperature";
import { effectiveReadings, evaluateRows } from "./batches.server";
import { db } from "./db.server";

type Site = typeof sites.$inferSelect;
export type RecordsScope = { sites: Site[] };
const DAY_MS = 86_400_000;

/** The default period: the seven days up to today, in the (first) site's zone. */
export function defaultRange(timeZone: string, now = Date.now()) {
  return { from: localDateOf(now - 6 * DAY_MS, timeZone), to: localDateOf(now, timeZone) };
}

const uuid = z.string().uuid();
const flag = z.enum(["1", "true", "on"]).transform(() => true);
const ParamSchemas = {
  site: uuid,
  product: uuid,
  method: z.enum(coolingMethodIds),
  equipment: uuid,
  outcome: z.enum(recordOutcomes),
  cook: uuid,
  late: flag,
  unverified: flag,
  sort: z.enum(recordSortKeys),
  dir: z.enum(["asc", "desc"]),
  page: z.coerce.number().int().min(1).max(100_000),
  size: z.coerce.number().pipe(z.union(recordPageSizes.map((s) => z.literal(s)) as [z.ZodLiteral<25>, z.ZodLiteral<50>, z.ZodLiteral<100>])),
};
export type RecordsParam = keyof typeof ParamSchemas | "range";

/**
 * The view's query from the page's search parameters. Each unusable parameter is named in `ignored`
 * and falls back to its default; a range that is not two valid dates at most a year apart falls back
 * to the last seven days. `bounds` (a share link's range) clamps the period.
 */
export function parseRecordsQuery(params: URLSearchParams, timeZone: string, now = Date.now(), bounds?: { from: string; to: string }) {
  const ignored: RecordsParam[] = [];
  const read = <K extends keyof typeof ParamSchemas>(key: K): z.output<(typeof ParamSchemas)[K]> | undefined => {
    const raw = params.get(key);
    if (raw === null || raw === "") return undefined;
    const parsed = ParamSchemas[key].safeParse(raw);
    if (parsed.success) return parsed.data as z.output<(typeof ParamSchemas)[K]>;
    ignored.push(key);
    return undefined;
  };
  const defaults = bounds ?? defaultRange(timeZone, now);
  let range = defaults;
  const from = params.get("from");
  const to = params.get("to");
  if (from || to) {
    const parsed = ExportRangeSchema.safeParse({ from: from ?? "", to: to ?? "" });
    if (!parsed.success || (bounds && (parsed.data.from < bounds.from || parsed.data.to > bounds.to))) ignored.push("range");
    else range = parsed.data;
  }
  const sort = read("sort") ?? "started";
  const query: RecordsQuery = {
    ...range,
    site: read("site") ?? null,
    product: read("product") ?? null,
    method: read("method") ?? null,
    equipment: read("equipment") ?? null,
    outcome: read("outcome") ?? null,
    cook: read("cook") ?? null,
    late: read("late") ?? false,
    unverified: read("unverified") ?? false,
    sort,
    dir: read("dir") ?? recordFirstDir[sort],
    page: read("page") ?? 1,
    size: read("size") ?? 25,
  };
  return { query, ignored, defaults };
}

/** The WHERE clause of a query over the scope: each site's own local-date range, then every filter. */
function matching(scope: RecordsScope, q: RecordsQuery): SQL | undefined {
  const perSite = scope.sites.map((s) => {
    const { fromMs, toMs } = rangeInstants(q, s.timeZone);
    return and(eq(batches.siteId, s.id), gte(batches.startedAt, new Date(fromMs)), lt(batches.startedAt, new Date(toMs)));
  });
  return and(
    or(...perSite),
    q.site ? eq(batches.siteId, q.site) : undefined,
    q.product ? eq(batches.productId, q.product) : undefined,
    q.method ? eq(batches.method, q.method) : undefined,
    q.equipment ? eq(batches.equipmentId, q.equipment) : undefined,
    q.outcome ? eq(batches.state, q.outcome) : undefined,
    q.cook
      ? sql`(${batches.startedBy} = ${q.cook} or exists (select 1 from ${readings} where ${readings.batchId} = ${batches.id} and ${readings.enteredBy} = ${q.cook}))`
      : undefined,
    q.late ? sql`exists (select 1 from ${readings} where ${readings.batchId} = ${batches.id} and ${readings.late})` : undefined,
    q.unverified ? sql`(${batches.state} <> 'cooling' and not exists (select 1 from ${verifications} where ${verifications.batchId} = ${batches.id}))` : undefined,
  );
}

const n = (v: unknown) => Number(v ?? 0);

export async function getRecordTotals(scope: RecordsScope, q: RecordsQuery): Promise<RecordTotals> {
  const signed = sql`exists (select 1 from ${verifications} where ${verifications.batchId} = ${batches.id})`;
  const late = sql`exists (select 1 from ${readings} where ${readings.batchId} = ${batches.id} and ${readings.late})`;
  const [t] = await db
    .select({
      batches: sql<number>`count(*)`.mapWith(n),
      cooling: sql<number>`count(*) filter (where ${batches.state} = 'cooling')`.mapWith(n),
      cooled: sql<number>`count(*) filter (where ${batches.state} = 'cooled')`.mapWith(n),
      reheated: sql<number>`count(*) filter (where ${batches.state} = 'cooled_after_reheat')`.mapWith(n),
      discarded: sql<number>`count(*) filter (where ${batches.state} = 'discarded')`.mapWith(n),
      unverified: sql<number>`count(*) filter (where ${batches.state} <> 'cooling' and not ${signed})`.mapWith(n),
      withLate: sql<number>`count(*) filter (where ${late})`.mapWith(n),
    })
    .from(batches)
    .where(matching(scope, q));
  const ended = t.batches - t.cooling;
  return { ...t, ended, passRate: ended > 0 ? Math.round((t.cooled / ended) * 1000) / 10 : null };
}

/** Rows grouped by their batch, in the order given. */
const byBatch = <T extends { batchId: string }>(list: T[]) => groupBy(list, (x) => x.batchId);

/** One page of the matching batches, the total, and the page actually shown (clamped to the last). */
export async function getRecords(scope: RecordsScope, q: RecordsQuery, now = Date.now()) {
  const { readingsOf: _readings, ...page } = await recordPage(scope, q, now);
  return page;
}

/** A page of records and the readings it was evaluated from (the print log lists them). */
async function recordPage(scope: RecordsScope, q: RecordsQuery, now: number) {
  const where = matching(scope, q);
  const totals = await getRecordTotals(scope, q);
  const pageCount = Math.max(1, Math.ceil(totals.batches / q.size));
  const page = Math.min(q.page, pageCount);
  const direction = q.dir === "asc" ? asc : desc;
  const outcomeOrder = sql`array_position(array['cooling','cooled','cooled_after_reheat','discarded']::batch_state[], ${batches.state})`;
  const order: SQL[] = {
    started: [direction(batches.startedAt)],
    product: [direction(products.name), desc(batches.startedAt)],
    outcome: [q.dir === "asc" ? sql`${outcomeOrder} asc` : sql`${outcomeOrder} desc`, desc(batches.startedAt)],
    site: [direction(sites.name), desc(batches.startedAt)],
  }[q.sort];
  const latestSignature = sql`(select ${verifications.id} from ${verifications} where ${verifications.batchId} = ${batches.id} order by ${verifications.signedAt} desc limit 1)`;
  const rows = await db
    .select({
      batch: batches,
      product: products,
      learnedLnS: equipment.learnedLnS,
      learnedSd: equipment.learnedSd,
      learnedBatches: equipment.learnedBatches,
      equipmentName: equipment.name,
      siteName: sites.name,
      startedByName: sql<string | null>`(select ${users.name} from ${users} where ${users.id} = ${batches.startedBy})`,
      actionCount: sql<number>`(select count(*) from corrective_actions a where a.batch_id = ${batches.id})`.mapWith(n),
      signedBy: sql<string | null>`(select u.name from ${verifications} v join ${users} u on u.id = v.signed_by where v.id = ${latestSignature})`,
      signedAt: sql<string | null>`(select v.signed_at::text from ${verifications} v where v.id = ${latestSignature})`,
    })
    .from(batches)
    .innerJoin(products, eq(products.id, batches.productId))
    .innerJoin(sites, eq(sites.id, batches.siteId))
    .leftJoin(equipment, eq(equipment.id, batches.equipmentId))
    .where(where)
    .orderBy(...order, asc(batches.id))
    .limit(q.size)
    .offset((page - 1) * q.size);

  const ids = rows.map((r) => r.batch.id);
  const rs = ids.length ? await db.select().from(readings).where(inArray(readings.batchId, ids)).orderBy(asc(readings.takenAt), asc(readings.receivedAt)) : [];
  const readingsOf = byBatch(rs);
  const siteById = new Map(scope.sites.map((s) => [s.id, s]));

  const out = rows.map((row): RecordRow => {
    const site = siteById.get(row.batch.siteId)!;
    const list = readingsOf.get(row.batch.id) ?? [];
    const byId = new Map(list.map((r) => [r.id, r]));
    const evaluation = evaluateRows(site, row, list, now);
    return {
      id: row.batch.id,
      siteId: site.id,
      siteName: row.siteName,
      timeZone: site.timeZone,
      unit: site.temperatureUnit,
      product: row.product.name,
      lotCode: row.batch.lotCode,
      method: row.batch.method,
      equipment: row.equipmentName,
      state: row.batch.state,
      startedAt: row.batch.startedAt.getTime(),
      endedAt: row.batch.endedAt?.getTime() ?? null,
      startedBy: row.startedByName,
      readingCount: list.length,
      lateCount: list.filter((r) => r.late).length,
      actionCount: row.actionCount,
      signedBy: row.signedBy,
      signedAt: row.signedAt ? Date.parse(row.signedAt) : null,
      stages: evaluation.stages.map((st) => {
        const met = st.metBy ? byId.get(st.metBy) : undefined;
        return {
          stage: st.stage,
          status: st.status,
          limit: Math.round(fromCelsius(toCelsius(st.limit.value, st.limit.unit), site.temperatureUnit) * 10) / 10,
          deadline: st.deadline,
          metAt: met ? met.takenAt.getTime() : null,
          metValue: met ? Math.round(fromCelsius(met.valueC, site.temperatureUnit) * 10) / 10 : null,
        };
      }),
    };
  });
  return { rows: out, totals, page, pageCount, clamped: page !== q.page, readingsOf };
}

/** What the filters can offer: the scope's products, equipment and people, and the methods. */
export async function getRecordFilterOptions(scope: RecordsScope) {
  const siteIds = scope.sites.map((s) => s.id);
  const [productRows, equipmentRows, people] = await Promise.all([
    db.select({ id: products.id, name: products.name, siteId: products.siteId }).from(products).where(inArray(products.siteId, siteIds)).orderBy(asc(products.name)),
    db.select({ id: equipment.id, name: equipment.name, siteId: equipment.siteId }).from(equipment).where(inArray(equipment.siteId, siteIds)).orderBy(asc(equipment.name)),
    db
      .selectDistinct({ id: users.id, name: users.name })
      .from(memberships)
      .innerJoin(users, eq(users.id, memberships.userId))
      .where(inArray(memberships.siteId, siteIds))
      .orderBy(asc(users.name), asc(users.id)),
  ]);
  return {
    sites: scope.sites.map((s) => ({ id: s.id, name: s.name })),
    products: productRows,
    equipment: equipmentRows,
    methods: coolingMethodIds as readonly string[],
    cooks: people,
  };
}

export const PRINT_MAX_DAYS = 31;
export const PRINT_MAX_BATCHES = 400;

export type PrintBatch = RecordRow & {
  readings: { takenAt: number; value: number; unit: "F" | "C"; kind: string; late: boolean; by: string | null; corrected: boolean }[];
  actions: { kind: string; takenAt: number; by: string | null; detail: Record<string, unknown> }[];
};

/**
 * A period's log for paper: the batches started in it (oldest first, at most PRINT_MAX_BATCHES), each
 * with its readings as they count (a correction shown in place of what it corrects), its corrective
 * actions and its latest signature. A range longer than PRINT_MAX_DAYS is cut to its first days.
 */
export async function getPrintLog(site: Site, range: { from: string; to: string }, now = Date.now()) {
  const lastDay = new Date(Date.parse(`${range.from}T00:00:00Z`) + (PRINT_MAX_DAYS - 1) * DAY_MS).toISOString().slice(0, 10);
  const cut = range.to > lastDay;
  const period = { from: range.from, to: cut ? lastDay : range.to };
  const query: RecordsQuery = { ...period, site: null, product: null, method: null, equipment: null, outcome: null, cook: null, late: false, unverified: false, sort: "started", dir: "asc", page: 1, size: 25 };
  const scope = { sites: [site] };
  const { rows, totals, readingsOf } = await recordPage(scope, { ...query, size: PRINT_MAX_BATCHES as 25 }, now);
  const ids = rows.map((r) => r.id);
  const [acts, names] = await Promise.all([
    ids.length ? db.select().from(correctiveActions).where(inArray(correctiveActions.batchId, ids)).orderBy(asc(correctiveActions.takenAt)) : [],
    db.select({ id: users.id, name: users.name }).from(users).where(eq(users.organisationId, site.organisationId)),
  ]);
  const who = new Map(names.map((u) => [u.id, u.name]));
  const actionsOf = byBatch(acts);
  const batchesOut: PrintBatch[] = rows.map((row) => ({
    ...row,
    readings: effectiveReadings(readingsOf.get(row.id) ?? []).map((r) => ({
      takenAt: r.takenAt.getTime(),
      value: r.valueEntered,
      unit: r.unitEntered,
      kind: r.kind,
      late: r.late,
      by: r.enteredBy ? (who.get(r.enteredBy) ?? null) : null,
      corrected: (readingsOf.get(row.id) ?? []).some((c) => c.correctsReadingId === r.id),
    })),
    actions: (actionsOf.get(row.id) ?? []).map((a) => ({ kind: a.kind, takenAt: a.takenAt.getTime(), by: a.takenBy ? (who.get(a.takenBy) ?? null) : null, detail: a.detail })),
  }));
  return { period, cut, totals, batches: batchesOut, truncated: totals.batches > rows.length };
}
