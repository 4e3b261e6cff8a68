import type { readings, sites } from "~db/schema";
import type { Assessment } from "~/lib/engine/assess";
import { getRuleSet } from "~/lib/rule-sets";
import type { BatchRow } from "./batches.server";

/**
 * How long at most a batch's assessment is reused while its record is unchanged. The rule's evaluation moves
 * with the clock only when a deadline passes (never reused across one, below); the prediction beside it
 * moves by seconds in a cooling that takes hours.
 */
export const ASSESSMENT_REUSE_MS = 15_000;

type Entry = { key: string; at: number; until: number; assessment: Assessment };
// Per process: each app process keeps its own, and every request reads the record it keys on afresh.
const entries = new Map<string, Entry>();
let prunedAt = 0;

/**
 * A batch's assessment, reused from an earlier one of the same record (`key`: everything the engine
 * reads but the clock, so any new reading, correction or move gives another key at once) within
 * ASSESSMENT_REUSE_MS, unless `fresh` (an entry, the alert sweep, a batch page) asks for a new one. A
 * fresh one is kept for the readers after it: the live view polls every batch of a site at once.
 */
export function assessWithReuse(batchId: string, key: string, now: number, fresh: boolean, compute: () => Assessment): Assessment {
  const hit = entries.get(batchId);
  if (!fresh && hit && hit.key === key && now >= hit.at - 1000 && now < hit.until) return hit.assessment;
  const assessment = compute();
  const deadlines = assessment.evaluation.stages.map((s) => s.deadline).filter((d): d is number => d !== null && d > now);
  // Each kept for half the window to all of it, so a site's batches, often assessed together, are not
  // all assessed again by the same request.
  const reuse = ASSESSMENT_REUSE_MS * (0.5 + Math.random() / 2);
  entries.set(batchId, { key, at: now, until: Math.min(now + reuse, ...deadlines), assessment });
  if (now - prunedAt > ASSESSMENT_REUSE_MS) {
    prunedAt = now;
    for (const [id, e] of entries) if (e.until <= now) entries.delete(id);
  }
  return assessment;
}

/**
 * Every part of a batch's record that `assessInput` (batches.server.ts) reads, the clock aside, in one
 * string: keep the two in step. Readings are append-only for the app (its database role may not
 * change or delete one, and a correction is a reading of its own), so a batch's readings are named by
 * how many there are and when the latest arrived: `readingsKey`, from the rows or from SQL.
 */
export function recordKey(site: Pick<typeof sites.$inferSelect, "temperatureUnit">, row: BatchRow, rows: (typeof readings.$inferSelect)[], movedAt: number | undefined) {
  const b = row.batch;
  const parts: unknown[] = [site.temperatureUnit, b.ruleSetCode, getRuleSet(b.ruleSetCode)?.version, b.startedAt.getTime(), b.panSize, b.panLengthMm, b.panWidthMm, b.panDepthMm, b.fillDepthMm, b.panMaterial, b.lid, b.method];
  parts.push(JSON.stringify(b.composition ?? row.product.composition), row.learnedLnS, row.learnedSd, row.learnedBatches, movedAt, readingsKey(rows));
  return parts.join("|");
}

/** How many readings and when the latest arrived (ms): what names an append-only set of them. */
export function readingsKey(rows: readonly Pick<typeof readings.$inferSelect, "receivedAt">[]) {
  let last = -Infinity;
  for (const r of rows) if (r.receivedAt.getTime() > last) last = r.receivedAt.getTime();
  return readingsKeyOf(rows.length, last);
}

/** readingsKey from a count and the latest arrival (ms), as SQL gives them. */
export const readingsKeyOf = (count: number, lastMs: number) => `${count}@${lastMs}`;
