import { randomUUID } from "node:crypto";
import { and, eq } from "drizzle-orm";
import { batches, correctiveActions, readings, verifications } from "~db/schema";
import { db, type newTenant } from "./db";

type Tenant = Awaited<ReturnType<typeof newTenant>>;
type BatchRow = typeof batches.$inferSelect;
type Verdict = NonNullable<BatchRow["verdict"]>;
export const minutesAgo = (m: number) => new Date(Date.now() - m * 60_000);
const sleep = (ms: number) => new Promise((r) => setTimeout(r, ms));

type AppBatches = typeof import("~/server/batches.server");
let appBatches: Promise<AppBatches> | undefined;
/**
 * The app's batch module, loaded on first use (it reads the environment when it loads). Through tsx,
 * which resolves the app's path aliases and JSON imports under Vitest and Playwright alike.
 */
const app = () => (appBatches ??= import("tsx/esm/api").then(({ tsImport }) => tsImport("../../app/server/batches.server.ts", import.meta.url) as Promise<AppBatches>));

/**
 * The app's own assessment of a batch, as after an entry: the derived columns (verdict, missed
 * stage, next reading due) come from the engine, never from the test.
 */
async function settle(t: Tenant, batchId: string) {
  const { settleState } = await app();
  const a = await settleState(t.site, batchId, Date.now());
  if (!a) throw new Error(`batch ${batchId} is not at site ${t.site.id}`);
  return a;
}

async function settleIfCooling(t: Tenant, batchId: string) {
  const [b] = await db.select({ state: batches.state }).from(batches).where(eq(batches.id, batchId));
  if (b?.state === "cooling") await settle(t, batchId);
}

/** Pans and methods whose forecast the engine gives the same way every time (it is deterministic). */
export const setups = {
  // A shallow fill in a blast chiller: well ahead of every stage.
  ahead: { panSize: "gn-1/1", panDepthMm: 65, fillDepthMm: 25, lid: false, method: "blast-chiller" },
  // A deep, lidded pan in a still walk-in: many hours to cool, so stage 1 will be missed.
  behind: { panSize: "gn-1/1", panDepthMm: 150, fillDepthMm: 140, lid: true, method: "walk-in" },
  // A 100 mm pan in a blast chiller: the fill that makes it tight is looked up (see `findTightFill`).
  tight: { panSize: "gn-1/1", panDepthMm: 100, fillDepthMm: 50, lid: false, method: "blast-chiller" },
} as const satisfies Record<Verdict, Partial<BatchRow>>;

/**
 * Sets the batch's fill to the one, of a few, whose worst open stage is furthest inside the "tight"
 * band (a chance of making it between 50 % and 90 %), so a forecast a little different either way
 * stays tight. Fails when none of them is tight. The batch is held out of the sweep meanwhile (it
 * reassesses only batches still cooling), so no fill tried raises an alert; it is cooling again after.
 */
async function findTightFill(t: Tenant, batchId: string) {
  const { assess } = await app();
  await db.update(batches).set({ state: "cooled" }).where(eq(batches.id, batchId));
  let best: { fill: number; margin: number } | null = null;
  for (let fill = 20; fill <= 100; fill += 5) {
    await db.update(batches).set({ fillDepthMm: fill }).where(eq(batches.id, batchId));
    const a = await assess(t.site, batchId, Date.now());
    const open = a!.prediction.stages.map((s) => s.probability).filter((p) => p !== null);
    if (a!.prediction.verdict !== "tight" || open.length === 0) continue;
    const worst = Math.min(...open);
    const margin = Math.min(worst - 0.5, 0.9 - worst);
    if (!best || margin > best.margin) best = { fill, margin };
  }
  if (!best) throw new Error("no fill depth of a 100 mm pan in a blast chiller is forecast as tight; pick another setup");
  await db.update(batches).set({ fillDepthMm: best.fill, state: "cooling" }).where(eq(batches.id, batchId));
}

export type CoolingScenario = {
  /** The forecast the engine must give; the pan and method are chosen to make it so (see `setups`). */
  verdict?: Verdict;
  /** When the batch went in, at 150 °F (its first reading), in minutes ago. */
  startedMinutesAgo?: number;
  /** Later readings: [minutes ago, °F]. */
  readings?: [number, number][];
} & Partial<Pick<BatchRow, "lotCode" | "productId" | "equipmentId">>;

/**
 * A batch still cooling, assessed by the app from its readings as after an entry. Its derived columns
 * are the engine's, so the alert sweep (which reassesses every cooling batch) leaves them as they are.
 * Throws when the engine's forecast is not the one asked for. Returns the batch as settled.
 */
export async function coolingBatch(t: Tenant, scenario: CoolingScenario = {}) {
  const { verdict = "ahead", startedMinutesAgo = 10, readings: later = [], ...row } = scenario;
  const startedAt = minutesAgo(startedMinutesAgo);
  const b = await insertStarted(t, { ...setups[verdict], startedAt, ...row });
  for (const [m, valueF] of later) await insertReading(t, b.id, valueF, minutesAgo(m));
  if (verdict === "tight") await findTightFill(t, b.id);
  const a = await settle(t, b.id);
  if (a.prediction.verdict !== verdict) throw new Error(`batch ${b.lotCode}: the engine says "${a.prediction.verdict}", the scenario wants "${verdict}"`);
  const [settled] = await db.select().from(batches).where(eq(batches.id, b.id));
  if (settled.state !== "cooling") throw new Error(`batch ${b.lotCode}: the readings ended it (${settled.state})`);
  return settled;
}

/**
 * A batch that has ended, written straight to the database. The sweep leaves ended batches alone, so
 * their derived columns (verdict, missed stage, fitted surface factor) may be set here by hand.
 */
export async function endedBatch(t: Tenant, over: Partial<typeof batches.$inferInsert> & { state: Exclude<BatchRow["state"], "cooling">; endedAt: Date }) {
  const startedAt = over.startedAt ?? minutesAgo(60);
  return insertStarted(t, { panSize: "gn-1/1", panDepthMm: 100, fillDepthMm: 75, method: "walk-in", verdict: "ahead", assessedAt: over.endedAt, nextReadingDueAt: null, ...over, startedAt });
}

/** The batch row as given, on the tenant's product unless told, with its start reading of 150 °F. */
async function insertStarted(t: Tenant, row: Omit<typeof batches.$inferInsert, "siteId" | "clientId" | "productId" | "lotCode" | "ruleSetCode"> & Partial<typeof batches.$inferInsert>) {
  const [b] = await db
    .insert(batches)
    .values({ siteId: t.site.id, clientId: randomUUID(), productId: t.product.id, lotCode: `L-${randomUUID().slice(0, 6)}`, ruleSetCode: t.site.ruleSetCode, ...row })
    .returning();
  await insertReading(t, b.id, 150, b.startedAt);
  return b;
}

/**
 * Waits until the alert sweep has reassessed every batch of the site still cooling (after this call
 * began), so what a test reads next is what the sweep leaves, not only what the scenario wrote.
 */
export async function afterSweep(t: Tenant, timeoutMs = 20_000) {
  const since = Date.now();
  const end = since + timeoutMs;
  while (Date.now() < end) {
    const cooling = await db.select({ assessedAt: batches.assessedAt }).from(batches).where(and(eq(batches.siteId, t.site.id), eq(batches.state, "cooling")));
    if (cooling.every((b) => b.assessedAt !== null && b.assessedAt.getTime() > since)) return;
    await sleep(200);
  }
  throw new Error(`no alert sweep reassessed the batches of site ${t.site.id} within ${timeoutMs} ms`);
}

async function insertReading(t: Tenant, batchId: string, valueF: number, takenAt: Date) {
  await db.insert(readings).values({ batchId, siteId: t.site.id, clientId: randomUUID(), valueEntered: valueF, unitEntered: "F", valueC: ((valueF - 32) * 5) / 9, takenAt, late: false, source: "api" });
}

/** A reading; a batch still cooling is reassessed, as after an entry. */
export async function addReading(t: Tenant, batchId: string, valueF: number, takenAt = new Date()) {
  await insertReading(t, batchId, valueF, takenAt);
  await settleIfCooling(t, batchId);
}

/** A corrective action nobody has confirmed; a batch still cooling is reassessed, as after a move. */
export async function addAction(t: Tenant, batchId: string) {
  const [a] = await db.insert(correctiveActions).values({ batchId, siteId: t.site.id, clientId: randomUUID(), kind: "change_method", takenAt: new Date() }).returning();
  await settleIfCooling(t, batchId);
  return a;
}

export async function sign(t: Tenant, batchId: string, covered: { readings: number; actions: number }) {
  await db.insert(verifications).values({ batchId, siteId: t.site.id, signedBy: t.people.manager.id, statement: "Checked.", statementVersion: 1, readingsCovered: covered.readings, actionsCovered: covered.actions });
}
