import { and, asc, eq, ne, sql } from "drizzle-orm";
import { z } from "zod";
import { auditEvents, batches, correctiveActions, equipment, panTypes, photos, products, readings, sites } from "~db/schema";
import { assessBatch, evaluateRecord, type AssessInput, type Assessment } from "~/lib/engine/assess";
import { coolingMethodIds, PanFillSchema, panMaterialIds, panSizeIds } from "~/lib/engine/equipment";
import { averageProperties, CompositionSchema } from "~/lib/engine/properties";
import { getRuleSet } from "~/lib/rule-sets";
import { toCelsius } from "~/lib/temperature";
import { alertsAfterEntry } from "./alerts.server";
import { groupBy } from "~/lib/group-by";
import { text } from "~/lib/forms";
import { assessWithReuse, readingsKey, readingsKeyOf, recordKey } from "./assessment-cache.server";
import { recordAudit, type Actor } from "./audit.server";
import { db, inUuids } from "./db.server";

/** An entry made more than this long after it was taken is marked late in every view and export. */
export const LATE_AFTER_MS = 15 * 60_000;
/** How far back a cook may set a reading's time. */
export const MAX_BACKDATE_MS = 12 * 3600_000;
const CLOCK_SKEW_MS = 60_000;
/** A rise of more than this between readings gets a warning, not a block (common practice: 3 K ≈ 5 °F). */
export const RISE_WARNING_K = 3;

const uuid = z.uuid("unknown id");
const clientId = z.string().min(8, "clientId must be 8–64 characters").max(64, "clientId must be 8–64 characters");
const unit = z.enum(["F", "C"], { error: 'unit must be "F" or "C"' });
const isoTime = z.iso.datetime({ offset: true, error: "takenAt must be an ISO 8601 time with its offset" });

/** Plausible core temperatures: a probe in cooling food reads between −30 and 110 °C. */
export function temperatureProblem(value: number, u: "F" | "C") {
  const c = toCelsius(value, u);
  if (!Number.isFinite(value)) return "Enter a temperature";
  if (c < -30 || c > 110) return u === "F" ? "A core temperature is between −22 °F and 230 °F" : "A core temperature is between −30 °C and 110 °C";
  return null;
}

/** Free text the API takes; its refusal speaks English, as the API's other messages do. */
const typed = () => text("must not hold control characters (such as NUL)");

export const StartBatchSchema = z.object({
  clientId,
  productId: uuid,
  lotCode: typed().min(1, "Enter the lot or batch code").max(60),
  quantityKg: z.number().positive("quantity must be more than 0 kg").max(5000).optional(),
  pan: z
    .object({
      size: z.union([z.enum(panSizeIds), z.string().regex(/^custom:[0-9a-f-]{36}$/)], { error: "unknown pan size" }),
      depthMm: z.number().int(),
      count: z.number().int().min(1, "at least one pan").max(100).default(1),
      fillDepthMm: z.number().int().positive("fill depth must be more than 0 mm"),
      material: z.enum(panMaterialIds, { error: "unknown pan material" }).default("stainless-steel"),
    })
    .superRefine((p, ctx) => {
      // A site's own pan is checked against its record when the batch starts.
      if (p.size.startsWith("custom:")) return;
      const r = PanFillSchema.safeParse({ size: p.size, depthMm: p.depthMm, fillDepthMm: p.fillDepthMm });
      if (!r.success) for (const i of r.error.issues) ctx.addIssue({ code: "custom", path: i.path, message: i.message });
    }),
  lid: z.boolean().default(false),
  method: z.enum(coolingMethodIds, { error: "unknown cooling method" }),
  equipmentId: uuid.optional(),
  start: z.object({ value: z.number({ error: "Enter the start temperature" }), unit, takenAt: isoTime.optional() }),
});

export const ReadingSchema = z.object({
  clientId,
  value: z.number({ error: "Enter a temperature" }),
  unit,
  takenAt: isoTime.optional(),
  probe: typed().max(60).optional(),
  kind: z.enum(["reading", "reheat"]).default("reading"),
  photoId: uuid.optional(),
  corrects: z.object({ readingId: uuid, reason: typed().min(3, "Say why this corrects the reading").max(300) }).optional(),
});

export const CorrectiveActionSchema = z.discriminatedUnion("kind", [
  z.object({
    kind: z.literal("change_method"),
    clientId,
    method: z.enum(coolingMethodIds, { error: "unknown cooling method" }),
    lid: z.boolean().default(false),
    equipmentId: uuid.optional(),
  }),
  z.object({
    kind: z.literal("discard"),
    clientId,
    quantityKg: z.number().positive("quantity must be more than 0 kg").max(5000).optional(),
    reason: typed().min(3, "Say why the batch is discarded").max(300),
  }),
]);
export type CorrectiveActionInput = z.infer<typeof CorrectiveActionSchema>;

export type StartBatchInput = z.infer<typeof StartBatchSchema>;
export type ReadingInput = z.infer<typeof ReadingSchema>;

export type Entrant = { actor: Actor; userId: string | null; source: "station" | "web" | "api"; stationDeviceId?: string; apiTokenId?: string };
type Site = typeof sites.$inferSelect;
type FieldErrors = Record<string, string>;
export type Outcome<T> = { ok: true; value: T; created: boolean; warnings: string[]; assessment?: Assessment } | { ok: false; status: 400 | 404 | 409; errors: FieldErrors };

const fail = (errors: FieldErrors, status: 400 | 404 | 409 = 400) => ({ ok: false as const, status, errors });

function timeProblem(takenAt: number, now: number, notBefore: number | null) {
  if (takenAt > now + CLOCK_SKEW_MS) return "The time cannot be in the future";
  if (takenAt < now - MAX_BACKDATE_MS) return "The time can be at most 12 hours ago";
  if (notBefore !== null && takenAt < notBefore) return "The time cannot be before the batch began";
  return null;
}

export async function startBatch(site: Site, who: Entrant, input: StartBatchInput, now = Date.now()): Promise<Outcome<typeof batches.$inferSelect>> {
  const existing = await db.select().from(batches).where(and(eq(batches.siteId, site.id), eq(batches.clientId, input.clientId)));
  if (existing[0]) return { ok: true, value: existing[0], created: false, warnings: [] };
  const errors: FieldErrors = {};
  const [product] = await db.select().from(products).where(and(eq(products.id, input.productId), eq(products.siteId, site.id), eq(products.active, true)));
  if (!product) errors.productId = "unknown product";
  if (input.equipmentId) {
    const [eqp] = await db.select({ id: equipment.id }).from(equipment).where(and(eq(equipment.id, input.equipmentId), eq(equipment.siteId, site.id)));
    if (!eqp) errors.equipmentId = "unknown equipment";
  }
  let custom: typeof panTypes.$inferSelect | undefined;
  if (input.pan.size.startsWith("custom:")) {
    [custom] = await db.select().from(panTypes).where(and(eq(panTypes.id, input.pan.size.slice(7)), eq(panTypes.siteId, site.id), eq(panTypes.active, true)));
    if (!custom) errors["pan.size"] = "unknown pan size";
    else if (input.pan.fillDepthMm > custom.depthMm) errors["pan.fillDepthMm"] = `Fill depth ${input.pan.fillDepthMm} mm is more than the pan's depth of ${custom.depthMm} mm`;
  }
  const tProblem = temperatureProblem(input.start.value, input.start.unit);
  if (tProblem) errors["start.value"] = tProblem;
  const startedAt = input.start.takenAt ? Date.parse(input.start.takenAt) : now;
  const when = timeProblem(startedAt, now, null);
  if (when) errors["start.takenAt"] = when;
  if (Object.keys(errors).length) return fail(errors);

  const rule = getRuleSet(site.ruleSetCode)!;
  const startC = toCelsius(input.start.value, input.start.unit);
  const upper = rule.clockStartsAt === "upper-limit" ? (input.start.unit === "F" ? rule.stages[0].from.f : rule.stages[0].from.c) : null;
  const startNotCaptured = upper !== null && input.start.value < upper;
  const warnings = startNotCaptured ? ["startBelowUpperLimit"] : [];
  const batch = await db.transaction(async (tx) => {
    const [b] = await tx
      .insert(batches)
      .values({
        siteId: site.id,
        clientId: input.clientId,
        productId: input.productId,
        lotCode: input.lotCode,
        composition: product!.composition,
        quantityKg: input.quantityKg ?? null,
        panSize: input.pan.size,
        panLengthMm: custom?.lengthMm ?? null,
        panWidthMm: custom?.widthMm ?? null,
        panDepthMm: custom?.depthMm ?? input.pan.depthMm,
        panCount: input.pan.count,
        fillDepthMm: input.pan.fillDepthMm,
        panMaterial: custom?.material ?? input.pan.material,
        lid: input.lid,
        method: input.method,
        equipmentId: input.equipmentId ?? null,
        ruleSetCode: site.ruleSetCode,
        startedAt: new Date(startedAt),
        startedBy: who.userId,
        startNotCaptured,
      })
      .onConflictDoNothing()
      .returning();
    if (!b) return null;
    await tx.insert(readings).values({
      batchId: b.id,
      siteId: site.id,
      clientId: `${input.clientId}:start`,
      valueEntered: input.start.value,
      unitEntered: input.start.unit,
      valueC: startC,
      takenAt: new Date(startedAt),
      receivedAt: new Date(now),
      late: now - startedAt > LATE_AFTER_MS,
      takenAtEdited: !!input.start.takenAt,
      enteredBy: who.userId,
      source: who.source,
      stationDeviceId: who.stationDeviceId ?? null,
      apiTokenId: who.apiTokenId ?? null,
    });
    await recordAudit(tx, { actor: who.actor, organisationId: site.organisationId, siteId: site.id, action: "batch.started", entity: "batch", entityId: b.id, data: { lotCode: input.lotCode, startC, startNotCaptured } });
    return b;
  });
  if (!batch) {
    // Another request with the same client id won the race: answer with its batch.
    const [b] = await db.select().from(batches).where(and(eq(batches.siteId, site.id), eq(batches.clientId, input.clientId)));
    return { ok: true, value: b, created: false, warnings: [] };
  }
  const assessment = await settleState(site, batch.id, now);
  return { ok: true, value: batch, created: true, warnings, assessment };
}

export async function recordReading(site: Site, who: Entrant, batchId: string, input: ReadingInput, now = Date.now()): Promise<Outcome<typeof readings.$inferSelect>> {
  // The batch (with what its assessment reads), its readings and its moves in one round trip (the
  // readings count only once the batch is this site's).
  const [[joined], earlier, moves] = await Promise.all([
    batchRowQuery(site, batchId),
    readingsQuery(batchId),
    movesQuery(batchId),
  ]);
  if (!joined) return fail({ batch: "not found" }, 404);
  const batch = joined.batch;
  const dup = earlier.find((r) => r.clientId === input.clientId);
  if (dup) return { ok: true, value: dup, created: false, warnings: [] };
  // An ended batch takes corrections only (a mistyped reading may have ended it).
  if (batch.state !== "cooling" && !input.corrects) return fail({ batch: "This batch has ended; it takes no more readings, only corrections" }, 409);
  if (batch.state === "discarded") return fail({ batch: "This batch was discarded" }, 409);

  const errors: FieldErrors = {};
  const tProblem = temperatureProblem(input.value, input.unit);
  if (tProblem) errors.value = tProblem;
  const takenAt = input.takenAt ? Date.parse(input.takenAt) : now;
  const when = timeProblem(takenAt, now, batch.startedAt.getTime());
  if (when) errors.takenAt = when;
  if (input.corrects && !earlier.some((r) => r.id === input.corrects!.readingId)) errors["corrects.readingId"] = "That reading is not one of this batch's";
  if (input.photoId) {
    const [photo] = await db.select({ id: photos.id }).from(photos).where(and(eq(photos.id, input.photoId), eq(photos.siteId, site.id)));
    if (!photo) errors.photoId = "unknown photo";
  }
  if (Object.keys(errors).length) return fail(errors);

  const valueC = toCelsius(input.value, input.unit);
  const warnings: string[] = [];
  const before = earlier.filter((r) => r.takenAt.getTime() <= takenAt && r.kind === "reading").at(-1);
  if (input.kind === "reading" && before && valueC - before.valueC > RISE_WARNING_K) warnings.push("risingTemperature");
  const row = await db.transaction(async (tx) => {
    const [r] = await tx
      .insert(readings)
      .values({
        batchId: batch.id,
        siteId: site.id,
        clientId: input.clientId,
        kind: input.kind,
        valueEntered: input.value,
        unitEntered: input.unit,
        valueC,
        takenAt: new Date(takenAt),
        receivedAt: new Date(now),
        late: now - takenAt > LATE_AFTER_MS,
        takenAtEdited: !!input.takenAt && Math.abs(takenAt - now) > CLOCK_SKEW_MS,
        probe: input.probe ?? null,
        photoId: input.photoId ?? null,
        enteredBy: who.userId,
        source: who.source,
        stationDeviceId: who.stationDeviceId ?? null,
        apiTokenId: who.apiTokenId ?? null,
        correctsReadingId: input.corrects?.readingId ?? null,
        correctionReason: input.corrects?.reason ?? null,
      })
      .onConflictDoNothing()
      .returning();
    if (!r) return null;
    await recordAudit(tx, {
      actor: who.actor,
      organisationId: site.organisationId,
      siteId: site.id,
      action: input.corrects ? "reading.corrected" : "reading.recorded",
      entity: "reading",
      entityId: r.id,
      data: { batchId: batch.id, valueEntered: input.value, unit: input.unit, late: r.late, corrects: input.corrects?.readingId ?? null },
    });
    return r;
  });
  if (!row) {
    const [r] = await db.select().from(readings).where(and(eq(readings.batchId, batch.id), eq(readings.clientId, input.clientId)));
    return { ok: true, value: r, created: false, warnings: [] };
  }
  // Settled from the batch as read above and its readings read again now: another entry for the
  // same batch may have landed meanwhile.
  const after = await readingsQuery(batch.id);
  const assessment = await settleState(site, batch.id, now, { row: joined, rows: after, movedAt: latestMove(moves) });
  return { ok: true, value: row, created: true, warnings, assessment };
}

class BatchEnded extends Error {}

/**
 * A corrective action: move the batch to another method now, or discard it (with the quantity). Each
 * is recorded once (client id), with who and when, in the same transaction as the change it makes.
 * A reheat is a reading of kind "reheat".
 */
export async function takeCorrectiveAction(site: Site, who: Entrant, batchId: string, input: CorrectiveActionInput, now = Date.now()): Promise<Outcome<typeof correctiveActions.$inferSelect>> {
  const [batch] = await db.select().from(batches).where(and(eq(batches.id, batchId), eq(batches.siteId, site.id)));
  if (!batch) return fail({ batch: "not found" }, 404);
  const [dup] = await db.select().from(correctiveActions).where(and(eq(correctiveActions.batchId, batch.id), eq(correctiveActions.clientId, input.clientId)));
  if (dup) return { ok: true, value: dup, created: false, warnings: [] };
  if (batch.state !== "cooling") return fail({ batch: "This batch has ended" }, 409);
  if (input.kind === "change_method" && input.equipmentId) {
    const [eqp] = await db.select({ id: equipment.id }).from(equipment).where(and(eq(equipment.id, input.equipmentId), eq(equipment.siteId, site.id)));
    if (!eqp) return fail({ equipmentId: "unknown equipment" });
  }
  const { clientId: _c, kind, ...detail } = input;
  const row = await db.transaction(async (tx) => {
    const [ca] = await tx
      .insert(correctiveActions)
      .values({ batchId: batch.id, siteId: site.id, clientId: input.clientId, kind, detail: { ...detail, from: { method: batch.method, lid: batch.lid } }, takenBy: who.userId, takenAt: new Date(now) })
      .onConflictDoNothing()
      .returning();
    if (!ca) return null;
    // Only a batch still cooling changes; a concurrent end makes the whole action roll back.
    const changes =
      input.kind === "change_method"
        ? { method: input.method, lid: input.lid, equipmentId: input.equipmentId ?? null }
        : { state: "discarded" as const, endedAt: new Date(now), quantityKg: input.quantityKg ?? batch.quantityKg, nextReadingDueAt: null };
    const [changed] = await tx.update(batches).set(changes).where(and(eq(batches.id, batch.id), eq(batches.state, "cooling"))).returning({ id: batches.id });
    if (!changed) throw new BatchEnded();
    await recordAudit(tx, { actor: who.actor, organisationId: site.organisationId, siteId: site.id, action: `batch.${kind}`, entity: "batch", entityId: batch.id, data: { correctiveActionId: ca.id, ...detail } });
    return ca;
  }).catch((e) => {
    if (e instanceof BatchEnded) return "ended" as const;
    throw e;
  });
  if (row === "ended") return fail({ batch: "This batch has ended" }, 409);
  if (!row) {
    const [ca] = await db.select().from(correctiveActions).where(and(eq(correctiveActions.batchId, batch.id), eq(correctiveActions.clientId, input.clientId)));
    return { ok: true, value: ca, created: false, warnings: [] };
  }
  // A move changes the prediction: the review queue and the alerts see the new verdict at once.
  const assessment = input.kind === "change_method" ? await settleState(site, batch.id, now) : undefined;
  return { ok: true, value: row, created: true, warnings: [], assessment };
}

/** The readings that count: a correction stands in place of the reading it corrects. */
export function effectiveReadings<R extends Pick<typeof readings.$inferSelect, "id" | "receivedAt" | "correctsReadingId" | "valueEntered" | "unitEntered" | "valueC">>(rows: R[]): R[] {
  const corrected = new Map<string, R>();
  // The latest correction of an entry wins (by when it arrived).
  for (const r of [...rows].sort((a, b) => a.receivedAt.getTime() - b.receivedAt.getTime())) if (r.correctsReadingId) corrected.set(r.correctsReadingId, r);
  // A correction replaces the value, never the time or the kind of the entry it corrects.
  return rows.filter((r) => !r.correctsReadingId).map((r) => {
    let last = r;
    while (corrected.has(last.id)) last = corrected.get(last.id)!;
    return last === r ? r : { ...r, valueEntered: last.valueEntered, unitEntered: last.unitEntered, valueC: last.valueC };
  });
}

/** The rule's evaluation and the engine's prediction for a batch, now. */
export async function assess(site: Site, batchId: string, now = Date.now()): Promise<Assessment | null> {
  return (await assessRead(site, batchId, now))?.assessment ?? null;
}

// The queries every entry and every live view makes, built once and prepared by PostgreSQL once per
// connection (named statements): building a query is a good part of an entry's own work.
const param = sql.placeholder;
// Batches with what their assessment reads besides the readings: product and equipment.
const batchRows = () =>
  db
    .select({ batch: batches, product: products, learnedLnS: equipment.learnedLnS, learnedSd: equipment.learnedSd, learnedBatches: equipment.learnedBatches })
    .from(batches)
    .innerJoin(products, eq(products.id, batches.productId))
    .leftJoin(equipment, eq(equipment.id, batches.equipmentId));
const batchRowStatement = batchRows()
  .where(and(eq(batches.id, param("batchId")), eq(batches.siteId, param("siteId"))))
  .prepare("cw_batch_row");
const readingsStatement = db.select().from(readings).where(eq(readings.batchId, param("batchId"))).orderBy(asc(readings.takenAt)).prepare("cw_batch_readings");
const movesStatement = db
  .select({ takenAt: correctiveActions.takenAt })
  .from(correctiveActions)
  .where(and(eq(correctiveActions.batchId, param("batchId")), eq(correctiveActions.kind, "change_method")))
  .prepare("cw_batch_moves");

function batchRowQuery(site: Pick<Site, "id">, batchId: string): Promise<BatchRow[]> {
  return batchRowStatement.execute({ batchId, siteId: site.id });
}

// A batch's readings in taken-at order.
function readingsQuery(batchId: string) {
  return readingsStatement.execute({ batchId });
}

function movesQuery(batchId: string) {
  return movesStatement.execute({ batchId });
}

const latestMove = (moves: { takenAt: Date }[]) => (moves.length ? Math.max(...moves.map((m) => m.takenAt.getTime())) : undefined);

/** What the batch's assessment read, with it: the row, the readings (taken-at order) and the last move. */
type Known = { row: BatchRow; rows: (typeof readings.$inferSelect)[]; movedAt: number | undefined };

async function assessRead(site: Site, batchId: string, now: number): Promise<(Known & { assessment: Assessment }) | null> {
  // Three reads at once; the readings and moves count only once the batch is this site's.
  const [[row], rows, moves] = await Promise.all([batchRowQuery(site, batchId), readingsQuery(batchId), movesQuery(batchId)]);
  if (!row) return null;
  const movedAt = latestMove(moves);
  return { row, rows, movedAt, assessment: assessRows(site, row, rows, now, movedAt, true) };
}

export type BatchRow = {
  batch: typeof batches.$inferSelect;
  product: typeof products.$inferSelect;
  learnedLnS: number | null;
  learnedSd: number | null;
  learnedBatches: number | null;
};

/**
 * The assessment from rows the caller already read (the live view, the sweep, the export's pictures),
 * reused while the batch's record is unchanged unless `fresh` (see assessment-cache.server.ts).
 */
export function assessRows(site: Site, row: BatchRow, rows: (typeof readings.$inferSelect)[], now: number, movedAt?: number, fresh = false) {
  return assessWithReuse(row.batch.id, recordKey(site, row, rows, movedAt), now, fresh, (at) => assessBatch(assessInput(site, row, rows, at, movedAt)));
}

/**
 * The rule's evaluation alone (no prediction), from rows the caller already read: the export reads a
 * page of batches with their readings in a few queries and evaluates each here, as the batch page would.
 */
export function evaluateRows(site: Pick<Site, "temperatureUnit">, row: BatchRow, rows: (typeof readings.$inferSelect)[], now: number) {
  return evaluateRecord(assessInput(site, row, rows, now)).evaluation;
}

// What this reads of the record, `recordKey` must name too (the live view reuses assessments by it).
function assessInput(site: Pick<Site, "temperatureUnit">, row: BatchRow, rows: (typeof readings.$inferSelect)[], now: number, movedAt?: number): AssessInput {
  const { batch, product } = row;
  const counted = effectiveReadings(rows);
  const start = counted[0];
  const startC = start ? start.valueC : 60;
  const composition = CompositionSchema.parse(batch.composition ?? product.composition);
  const food = averageProperties(composition, { fromC: Math.max(startC, 5), toC: 3 });
  return {
    ruleSet: getRuleSet(batch.ruleSetCode)!,
    setup: {
      food,
      pan: batch.panLengthMm && batch.panWidthMm ? { lengthMm: batch.panLengthMm, widthMm: batch.panWidthMm, depthMm: batch.panDepthMm } : { size: batch.panSize, depthMm: batch.panDepthMm },
      fillDepthMm: batch.fillDepthMm,
      panMaterial: batch.panMaterial,
      lid: batch.lid,
      method: batch.method,
      startC,
      learned: row.learnedLnS !== null && row.learnedBatches ? { lnS: row.learnedLnS, sd: row.learnedSd ?? 0.3, batches: row.learnedBatches } : undefined,
    },
    batchStartedAt: batch.startedAt.getTime(),
    readings: counted.map((r) => ({ id: r.id, takenAt: r.takenAt.getTime(), value: r.valueEntered, unit: r.unitEntered, kind: r.kind })),
    siteUnit: site.temperatureUnit,
    now,
    movedAt,
  };
}

/** The state follows the record: cooled once the readings meet every stage, cooling again if a correction undoes that. */
export async function settleState(site: Site, batchId: string, now: number, known?: Known) {
  const read = known ? { ...known, assessment: assessRows(site, known.row, known.rows, now, known.movedAt, true) } : await assessRead(site, batchId, now);
  if (!read) return undefined;
  const a = read.assessment;
  const was = read.row.batch;
  const state = a.evaluation.outcome === "passed" ? (a.evaluation.attempts.length > 1 ? "cooled_after_reheat" : "cooled") : "cooling";
  const lastAt = read.rows.length ? Math.max(...read.rows.map((r) => r.takenAt.getTime())) : null;
  // With the row in hand, the derived columns are written only when they change.
  await refreshSnapshot(site, batchId, a, now, state, was.state === state ? { row: was, lastReadingAt: lastAt } : undefined);
  // The state moves (and the audit, and the equipment's learning) only when it changes.
  if (was.state !== state && was.state !== "discarded") await db.transaction(async (tx) => {
    const [b] = await tx
      .update(batches)
      .set({ state, endedAt: state === "cooling" ? null : new Date(now) })
      .where(and(eq(batches.id, batchId), ne(batches.state, state), ne(batches.state, "discarded")))
      .returning({ id: batches.id });
    if (!b) return;
    await recordAudit(tx, { actor: { kind: "system", label: "rule evaluation" }, organisationId: site.organisationId, siteId: site.id, action: `batch.${state}`, entity: "batch", entityId: batchId });
    if (state !== "cooling") await learnFromBatch(tx, site, batchId, a);
  });
  // An entry can put a batch off track (or show a stage missed) at once, without waiting for the sweep.
  await alertsAfterEntry(site, batchId, a, now, { id: batchId, state: was.state === "discarded" ? was.state : state, lotCode: was.lotCode, product: read.row.product.name, last: lastAt });
  return a;
}

/**
 * The derived columns the review queue, the manager's home and the alerts read: the verdict, the
 * earliest missed deadline and when the next reading is due. Refreshed after every entry and by the
 * alert sweep; they are a cache of the assessment, never the record.
 */
export async function refreshSnapshot(
  site: Site,
  batchId: string,
  a: Assessment,
  now: number,
  state?: string,
  known?: { row: typeof batches.$inferSelect; lastReadingAt: number | null },
) {
  const current = a.evaluation.attempts.at(-1);
  // The sweep has the readings in hand already; an entry's settling asks the database.
  const last = known ? known.lastReadingAt : a.evaluation.stages.length ? await lastReadingAt(batchId) : null;
  const ended = state ? state !== "cooling" : false;
  const next = {
    verdict: a.prediction.verdict,
    missedAt: current?.missedAt ? new Date(current.missedAt) : null,
    nextReadingDueAt: ended || last === null ? null : new Date(last + site.readingIntervalMinutes * 60_000),
  };
  // The sweep passes the row it read: nothing to write when nothing changed.
  const same = (x: Date | null, y: Date | null) => (x?.getTime() ?? null) === (y?.getTime() ?? null);
  const was = known?.row;
  if (was && was.verdict === next.verdict && same(was.missedAt, next.missedAt) && same(was.nextReadingDueAt, next.nextReadingDueAt)) return;
  await db
    .update(batches)
    .set({
      ...next,
      assessedAt: new Date(now),
      ...(ended ? { fittedLnS: a.prediction.calibration.readingsUsed >= 3 ? Math.log(a.prediction.calibration.s) : null } : {}),
    })
    // Without a state from the caller (the sweep), only a batch still cooling is refreshed: one that
    // ended a moment ago keeps what its ending wrote.
    .where(and(eq(batches.id, batchId), eq(batches.siteId, site.id), state ? undefined : eq(batches.state, "cooling")));
}

async function lastReadingAt(batchId: string) {
  const [r] = await db.select({ at: sql<Date>`max(${readings.takenAt})` }).from(readings).where(eq(readings.batchId, batchId));
  return r?.at ? new Date(r.at).getTime() : null;
}

/**
 * A batch that ended teaches its equipment: the surface factor fitted on its readings joins the
 * equipment's running mean and spread of ln s (Welford's online algorithm), which becomes the prior of
 * the next batch there. Batches moved mid-way or fitted on fewer than three readings teach nothing.
 */
async function learnFromBatch(tx: Parameters<Parameters<typeof db.transaction>[0]>[0], site: Site, batchId: string, a: Assessment) {
  const [row] = await tx.select({ equipmentId: batches.equipmentId, method: batches.method }).from(batches).where(eq(batches.id, batchId));
  if (!row?.equipmentId || a.prediction.calibration.readingsUsed < 3) return;
  // Each batch teaches once, even if a correction reopens and ends it again.
  const taught = await tx.select({ id: auditEvents.id }).from(auditEvents).where(and(eq(auditEvents.action, "equipment.learned"), sql`${auditEvents.data}->>'batchId' = ${batchId}`)).limit(1);
  if (taught.length) return;
  const moved = await tx.select({ id: correctiveActions.id }).from(correctiveActions).where(and(eq(correctiveActions.batchId, batchId), eq(correctiveActions.kind, "change_method")));
  if (moved.length) return;
  const [eqp] = await tx.select().from(equipment).where(and(eq(equipment.id, row.equipmentId), eq(equipment.siteId, site.id)));
  if (!eqp || eqp.method !== row.method) return;
  const x = Math.log(a.prediction.calibration.s);
  const n = eqp.learnedBatches + 1;
  const mean0 = eqp.learnedLnS ?? 0;
  const mean = eqp.learnedBatches === 0 ? x : mean0 + (x - mean0) / n;
  // The spread kept is the sample sd, floored by the batch's own fit uncertainty.
  const m2 = (eqp.learnedSd ?? 0) ** 2 * Math.max(0, eqp.learnedBatches - 1) + (x - mean0) * (x - mean);
  const sd = Math.max(Math.sqrt(a.prediction.calibration.cov[0][0]), n > 1 ? Math.sqrt(m2 / (n - 1)) : 0.3);
  await tx.update(equipment).set({ learnedLnS: mean, learnedSd: sd, learnedBatches: n }).where(eq(equipment.id, eqp.id));
  await recordAudit(tx, { actor: { kind: "system", label: "equipment learning" }, organisationId: site.organisationId, siteId: site.id, action: "equipment.learned", entity: "equipment", entityId: eqp.id, data: { batchId, lnS: x, mean, sd, batches: n } });
}

// The live view's queries, prepared as the entry's are (above); `ids` is an array of uuids.
const inIds = (column: Parameters<typeof inUuids>[0]) => inUuids(column, "ids");
const readingsOfStatement = db.select().from(readings).where(inIds(readings.batchId)).orderBy(asc(readings.takenAt)).prepare("cw_readings_of");
// The active batches in one read: each one's row version (PostgreSQL's xmin of the batch, its product
// and its equipment, which changes whenever that row is written), how many readings it has and when
// the latest arrived, and its latest move. Full rows and readings are then read only for batches this
// process has not seen at that version or count.
const activeStatement = db
  .select({
    id: batches.id,
    version: sql<string>`${batches}.xmin::text || '.' || ${products}.xmin::text || '.' || coalesce(${equipment}.xmin::text, '')`,
    readings: sql<number>`(SELECT count(*)::int FROM ${readings} r WHERE r.batch_id = ${batches.id})`,
    lastReceived: sql<Date | null>`(SELECT max(r.received_at) FROM ${readings} r WHERE r.batch_id = ${batches.id})`.mapWith(readings.receivedAt),
    movedAt: sql<Date | null>`(SELECT max(ca.taken_at) FROM ${correctiveActions} ca WHERE ca.batch_id = ${batches.id} AND ca.kind = 'change_method')`.mapWith(correctiveActions.takenAt),
  })
  .from(batches)
  .innerJoin(products, eq(products.id, batches.productId))
  .leftJoin(equipment, eq(equipment.id, batches.equipmentId))
  .where(and(inIds(batches.siteId), eq(batches.state, "cooling")))
  .orderBy(asc(batches.startedAt), asc(batches.id))
  .prepare("cw_active_batches");
const batchRowsOfStatement = batchRows().where(inIds(batches.id)).prepare("cw_batch_rows_of");
type ActiveStats = Awaited<ReturnType<typeof activeStatement.execute>>[number];

/**
 * What this process last read of each batch, under the key it was read at: an entry is answered only
 * for that key, and dropped once no request has used it for 10 minutes (all of them past 20,000
 * batches, far above any site's active batches).
 */
class KeptPerBatch<V> {
  private entries = new Map<string, { key: string; value: V; usedAt: number }>();
  private prunedAt = 0;
  get(id: string, key: string, now: number): V | undefined {
    const kept = this.entries.get(id);
    if (!kept || kept.key !== key) return undefined;
    kept.usedAt = now;
    return kept.value;
  }
  set(id: string, key: string, value: V, now: number) {
    this.entries.set(id, { key, value, usedAt: now });
  }
  prune(now: number) {
    if (this.entries.size > 20_000) this.entries.clear();
    if (now - this.prunedAt <= 600_000) return;
    this.prunedAt = now;
    for (const [id, kept] of this.entries) if (now - kept.usedAt > 600_000) this.entries.delete(id);
  }
}

type ReadingRow = typeof readings.$inferSelect;
// Each active batch's readings, under their readingsKey. Readings are append-only for the app, so a
// batch whose count and latest arrival are unchanged has the same readings: the live view, polled
// every 30 s by every open page, reads only the batches that changed.
const readingsKept = new KeptPerBatch<ReadingRow[]>();
// Each active batch's row (with its product and equipment), under its version. Decoding 200 rows of
// 40 columns on every poll held saturated polls to 33.4 a second (48.3 once kept, one process).
const rowsKept = new KeptPerBatch<BatchRow>();

/** The readings of these batches (taken-at order), read again only for those with new ones. */
async function readingsOfBatches(active: ActiveStats[], now: number): Promise<Map<string, ReadingRow[]>> {
  const out = new Map<string, ReadingRow[]>();
  const stale: string[] = [];
  for (const st of active) {
    const kept = st.readings === 0 ? [] : readingsKept.get(st.id, readingsKeyOf(st.readings, st.lastReceived!.getTime()), now);
    if (kept) out.set(st.id, kept);
    else stale.push(st.id);
  }
  if (stale.length) {
    // Grouped in one pass, each batch's readings stay in taken-at order.
    const fresh = groupBy(await readingsOfStatement.execute({ ids: stale }), (r) => r.batchId);
    for (const [id, list] of fresh) {
      out.set(id, list);
      readingsKept.set(id, readingsKey(list), list, now);
    }
  }
  readingsKept.prune(now);
  return out;
}

/** The batches' rows (with `active`'s order), read again only for those written since. */
async function rowsOfBatches(active: ActiveStats[], now: number): Promise<BatchRow[]> {
  const rows = new Map<string, BatchRow>();
  const stale = new Map<string, string>();
  for (const v of active) {
    const kept = rowsKept.get(v.id, v.version, now);
    if (kept) rows.set(v.id, kept);
    else stale.set(v.id, v.version);
  }
  if (stale.size) {
    // A row written between the two reads is kept under the older version: read again next time.
    for (const row of await batchRowsOfStatement.execute({ ids: [...stale.keys()] })) {
      rows.set(row.batch.id, row);
      rowsKept.set(row.batch.id, stale.get(row.batch.id)!, row, now);
    }
  }
  rowsKept.prune(now);
  // Gone or ended between the two reads: not active any more.
  return active.map((v) => rows.get(v.id)).filter((row): row is BatchRow => row?.batch.state === "cooling");
}

/**
 * Active batches of some sites, each with its current assessment (for the API and the live view). An
 * assessment of the same record a few seconds old is reused (see assessment-cache.server.ts) unless
 * `fresh`: the alert sweep asks for fresh ones, and leaves them for the next readers.
 */
export async function listActive(siteRows: Site[], now = Date.now(), options: { fresh?: boolean } = {}) {
  if (siteRows.length === 0) return [];
  const ids = siteRows.map((s) => s.id);
  const active = await activeStatement.execute({ ids });
  if (active.length === 0) return [];
  const [rows, readingsOf] = await Promise.all([rowsOfBatches(active, now), readingsOfBatches(active, now)]);
  const siteById = new Map(siteRows.map((s) => [s.id, s]));
  const movedAt = new Map(active.map((a) => [a.id, a.movedAt?.getTime()]));
  const out = [];
  let sinceYield = performance.now();
  for (const row of rows) {
    const mine = readingsOf.get(row.batch.id) ?? [];
    out.push({ ...row, readings: mine, assessment: assessRows(siteById.get(row.batch.siteId)!, row, mine, now, movedAt.get(row.batch.id), options.fresh ?? false) });
    // An assessment costs a millisecond or two (the sweep asks for every active batch afresh, the live
    // view for those whose record changed): requests waiting meanwhile run every 10 ms instead of
    // after the whole site.
    if (performance.now() - sinceYield > 10) {
      await new Promise((r) => setImmediate(r));
      sinceYield = performance.now();
    }
  }
  return out;
}
