import { describe, expect, it } from "vitest";
import type { batches, products, readings } from "~db/schema";
import { assessBatch, type AssessInput } from "~/lib/engine/assess";
import { getRuleSet } from "~/lib/rule-sets";
import { ASSESSMENT_REUSE_MS, ASSESSMENT_STALE_MS, assessWithReuse, recordKey, refreshesSettled } from "~/server/assessment-cache.server";
import type { BatchRow } from "~/server/batches.server";

const fda = getRuleSet("fda-3-501.14-a")!;
const t0 = Date.parse("2026-12-01T14:00:00Z");
const min = 60_000;
const input = (now: number): AssessInput => ({
  ruleSet: fda,
  setup: { food: { k: 0.52, alpha: 1.35e-7, rhoCp: 0.52 / 1.35e-7 }, pan: { size: "gn-1/1", depthMm: 65 }, fillDepthMm: 50, panMaterial: "stainless-steel", lid: false, method: "walk-in", startC: 65 },
  batchStartedAt: t0,
  readings: [{ id: "r0", takenAt: t0, value: 150, unit: "F" }, { id: "r1", takenAt: t0 + 20 * min, value: 120, unit: "F" }],
  siteUnit: "F",
  now,
});
let n = 0;
// Each test its own batch id: the cache is the module's own.
const batchId = () => `batch-${n++}`;

describe("reusing a batch's assessment", () => {
  it("the same record within the window is assessed once; another key, a fresh read or the stale limit assesses again", () => {
    const id = batchId();
    let runs = 0;
    const run = (at: number) => (runs++, assessBatch(input(at)));
    const first = assessWithReuse(id, "k1", t0 + 30 * min, false, run);
    // Reused for at least half the window.
    expect(assessWithReuse(id, "k1", t0 + 30 * min + ASSESSMENT_REUSE_MS / 2 - 1, false, run)).toBe(first);
    expect(runs).toBe(1);
    // A new reading or move is another key: assessed at once.
    expect(assessWithReuse(id, "k2", t0 + 30 * min + 7400, false, run)).not.toBe(first);
    expect(runs).toBe(2);
    // An entry or the sweep asks for a fresh one, which the next reader then gets.
    const fresh = assessWithReuse(id, "k2", t0 + 30 * min + 7500, true, run);
    expect(runs).toBe(3);
    expect(assessWithReuse(id, "k2", t0 + 30 * min + 8000, false, run)).toBe(fresh);
    assessWithReuse(id, "k2", t0 + 30 * min + 7500 + ASSESSMENT_STALE_MS, false, run);
    expect(runs).toBe(4);
  });

  it("after the window, the kept one is answered at once and a new one is made after the answer; past the stale limit it is made at once", async () => {
    const id = batchId();
    let runs = 0;
    const made: number[] = [];
    const run = (at: number) => (runs++, made.push(at), assessBatch(input(at)));
    const at = t0 + 30 * min;
    const first = assessWithReuse(id, "k", at, false, run);
    const later = at + ASSESSMENT_REUSE_MS + 1;
    expect(assessWithReuse(id, "k", later, false, run)).toBe(first);
    // Asked twice before it runs: queued once.
    expect(assessWithReuse(id, "k", later + 10, false, run)).toBe(first);
    expect(runs).toBe(1);
    await refreshesSettled();
    expect(runs).toBe(2);
    // Made at the reader's clock (plus the moments it waited), not at the first one's.
    expect(made[1]).toBeGreaterThanOrEqual(later);
    expect(made[1]).toBeLessThan(later + 5_000);
    const second = assessWithReuse(id, "k", later + 20, false, run);
    expect(second).not.toBe(first);
    expect(second.prediction.now.centerC).toBeLessThan(first.prediction.now.centerC);
    expect(runs).toBe(2);
    // A record that changed is never answered from the old one, stale or not.
    expect(assessWithReuse(id, "k-new", later + 30, false, run)).not.toBe(second);
    expect(runs).toBe(3);
    // Too old to answer even while a new one is made: made at once.
    const third = assessWithReuse(id, "k-new", later + 30 + ASSESSMENT_STALE_MS, false, run);
    expect(runs).toBe(4);
    await refreshesSettled();
    expect(runs).toBe(4);
    expect(assessWithReuse(id, "k-new", later + 40 + ASSESSMENT_STALE_MS, false, run)).toBe(third);
  });

  it("is never reused across a deadline: the stage becomes missed on time", () => {
    const id = batchId();
    const deadline = assessBatch(input(t0 + 30 * min)).evaluation.stages[0].deadline!;
    const before = deadline - 2000;
    const a = assessWithReuse(id, "k", before, false, (at) => assessBatch(input(at)));
    expect(a.evaluation.stages[0].status).not.toBe("missed");
    const after = assessWithReuse(id, "k", deadline + 1000, false, (at) => assessBatch(input(at)));
    expect(after).not.toBe(a);
    expect(after.evaluation.stages[0].status).toBe("missed");
  });

  it("the key changes with a new reading, a correction, a move, the method and what the equipment learned", () => {
    const batch = { id: "b", ruleSetCode: fda.code, startedAt: new Date(t0), panSize: "gn-1/1", panLengthMm: null, panWidthMm: null, panDepthMm: 65, fillDepthMm: 50, panMaterial: "stainless-steel", lid: false, method: "walk-in", composition: { water: 80, protein: 20 } } as unknown as typeof batches.$inferSelect;
    const row: BatchRow = { batch, product: { composition: { water: 80, protein: 20 } } as unknown as typeof products.$inferSelect, learnedLnS: null, learnedSd: null, learnedBatches: null };
    const reading = (id: string, value: number, corrects: string | null = null, arrivedMin = 0) =>
      ({ id, takenAt: new Date(t0), receivedAt: new Date(t0 + arrivedMin * min), valueEntered: value, unitEntered: "F", valueC: ((value - 32) * 5) / 9, kind: "reading", correctsReadingId: corrects }) as typeof readings.$inferSelect;
    const site = { temperatureUnit: "F" as const };
    const base = recordKey(site, row, [reading("r0", 150)], undefined);
    expect(recordKey(site, row, [reading("r0", 150)], undefined)).toBe(base);
    const variants = [
      recordKey(site, row, [reading("r0", 150), reading("r1", 120)], undefined),
      // Readings are append-only: a record only grows, by a reading or by a correction of one.
      recordKey(site, row, [reading("r0", 150), reading("r1", 120), reading("r2", 149, "r0", 3)], undefined),
      // The same count with a later arrival (a set the app could only reach by a delete and an insert).
      recordKey(site, row, [reading("r0", 150), reading("r1", 120, null, 1)], undefined),
      recordKey(site, row, [reading("r0", 150)], t0 + 5 * min),
      recordKey(site, { ...row, batch: { ...batch, method: "ice-bath" } }, [reading("r0", 150)], undefined),
      recordKey(site, { ...row, learnedLnS: 0.1, learnedSd: 0.2, learnedBatches: 3 }, [reading("r0", 150)], undefined),
      recordKey({ temperatureUnit: "C" }, row, [reading("r0", 150)], undefined),
    ];
    expect(new Set([base, ...variants]).size).toBe(variants.length + 1);
  });
});
