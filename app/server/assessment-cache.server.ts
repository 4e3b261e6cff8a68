import type { readings, sites } from "~db/schema";
import type { Assessment } from "~/lib/engine/assess";
import { getRuleSet } from "~/lib/rule-sets";
import type { BatchRow } from "./batches.server";

/**
 * How long a batch's assessment is reused as it is while its record is unchanged. The rule's
 * evaluation moves with the clock only when a deadline passes (never reused across one, below); the
 * prediction beside it moves by seconds in a cooling that takes hours.
 */
export const ASSESSMENT_REUSE_MS = 15_000;
/**
 * After that, and up to this age, a reader still gets it at once while a new one is made after the
 * answer (stale while revalidating): the live view of a busy site would otherwise make, on some
 * poll, the assessments of every batch whose window ended since the last one.
 */
export const ASSESSMENT_STALE_MS = 60_000;

type Compute = (now: number) => Assessment;
type Entry = { key: string; at: number; until: number; staleUntil: number; assessment: Assessment };
// Per process: each app process keeps its own, and every request reads the record it keys on afresh.
const entries = new Map<string, Entry>();
let prunedAt = 0;

/**
 * A batch's assessment, reused from an earlier one of the same record (`key`: everything the engine
 * reads but the clock, so any new reading, correction or move gives another key at once) within
 * ASSESSMENT_REUSE_MS, unless `fresh` (an entry, the alert sweep, a batch page) asks for a new one. A
 * fresh one is kept for the readers after it: the live view polls every batch of a site at once.
 * Between ASSESSMENT_REUSE_MS and ASSESSMENT_STALE_MS the kept one is answered and a new one queued.
 */
export function assessWithReuse(batchId: string, key: string, now: number, fresh: boolean, compute: Compute): Assessment {
  const hit = entries.get(batchId);
  if (!fresh && hit && hit.key === key && now >= hit.at - 1000) {
    if (now < hit.until) return hit.assessment;
    if (now < hit.staleUntil) {
      queueRefresh(batchId, key, now, compute);
      return hit.assessment;
    }
  }
  return keep(batchId, key, now, compute(now));
}

function keep(batchId: string, key: string, now: number, assessment: Assessment) {
  const deadlines = assessment.evaluation.stages.map((s) => s.deadline).filter((d): d is number => d !== null && d > now);
  // Each kept for half the window to all of it, so a site's batches, often assessed together, are not
  // all due again at the same poll.
  const reuse = ASSESSMENT_REUSE_MS * (0.5 + Math.random() / 2);
  entries.set(batchId, { key, at: now, until: Math.min(now + reuse, ...deadlines), staleUntil: Math.min(now + ASSESSMENT_STALE_MS, ...deadlines), assessment });
  if (now - prunedAt > ASSESSMENT_REUSE_MS) {
    prunedAt = now;
    for (const [id, e] of entries) if (e.staleUntil <= now) entries.delete(id);
  }
  return assessment;
}

// The queued refreshes, one per batch, made a few at a time between other requests.
const queued = new Map<string, { key: string; now: number; queuedAt: number; compute: Compute }>();
let draining = false;

function queueRefresh(batchId: string, key: string, now: number, compute: Compute) {
  if (queued.get(batchId)?.key === key) return;
  queued.set(batchId, { key, now, queuedAt: performance.now(), compute });
  if (!draining) {
    draining = true;
    setImmediate(drain);
  }
}

/** Makes queued assessments for about 5 ms, then lets waiting requests run before the next few. */
function drain() {
  const until = performance.now() + 5;
  for (const [batchId, job] of queued) {
    queued.delete(batchId);
    const hit = entries.get(batchId);
    // Already replaced meanwhile (an entry, the sweep, a newer record): nothing to do.
    if (!hit || hit.key !== job.key || hit.at > job.now) continue;
    // The clock as the reader's, moved on by the time the job waited.
    const now = job.now + (performance.now() - job.queuedAt);
    try {
      keep(batchId, job.key, now, job.compute(now));
    } catch (e) {
      // The next reader makes it in its own request and sees the error there.
      entries.delete(batchId);
      console.error(`assessment of batch ${batchId} in the background failed:`, e);
    }
    if (performance.now() > until) break;
  }
  if (queued.size) setImmediate(drain);
  else draining = false;
}

/** Resolves once every queued refresh is made (tests). */
export async function refreshesSettled() {
  while (draining) await new Promise((r) => setImmediate(r));
}

/**
 * Every part of a batch's record that `assessInput` (batches.server.ts) reads, the clock aside, in one
 * string: keep the two in step. Readings are append-only for the app (its database role may not
 * change or delete one, and a correction is a reading of its own), so a batch's readings are named by
 * how many there are and when the latest arrived: `readingsKey`, from the rows or from SQL.
 */
export function recordKey(site: Pick<typeof sites.$inferSelect, "temperatureUnit">, row: BatchRow, rows: (typeof readings.$inferSelect)[], movedAt: number | undefined) {
  return `${site.temperatureUnit}|${rowKey(row)}|${movedAt}|${readingsKey(rows)}`;
}

// The batch row's part, once per row object: the live view keeps a batch's row while it is unwritten.
const rowKeys = new WeakMap<BatchRow, string>();
function rowKey(row: BatchRow) {
  let key = rowKeys.get(row);
  if (key === undefined) {
    const b = row.batch;
    const parts: unknown[] = [b.ruleSetCode, getRuleSet(b.ruleSetCode)?.version, b.startedAt.getTime(), b.panSize, b.panLengthMm, b.panWidthMm, b.panDepthMm, b.fillDepthMm, b.panMaterial, b.lid, b.method];
    parts.push(JSON.stringify(b.composition ?? row.product.composition), row.learnedLnS, row.learnedSd, row.learnedBatches);
    key = parts.join("|");
    rowKeys.set(row, key);
  }
  return key;
}

/** How many readings and when the latest arrived (ms): what names an append-only set of them. */
export function readingsKey(rows: readonly Pick<typeof readings.$inferSelect, "receivedAt">[]) {
  let last = -Infinity;
  for (const r of rows) if (r.receivedAt.getTime() > last) last = r.receivedAt.getTime();
  return readingsKeyOf(rows.length, last);
}

/** readingsKey from a count and the latest arrival (ms), as SQL gives them. */
export const readingsKeyOf = (count: number, lastMs: number) => `${count}@${lastMs}`;
