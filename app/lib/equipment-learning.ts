/**
 * The surface factor a unit has learned, s = exp(mean ln s), and its spread. The spread is first order
 * in the sd of ln s, sd(s) ≈ s·sd(ln s), which is close for the tight spreads a unit reaches after a
 * few batches.
 */
export function learnedFactor(e: { learnedLnS: number | null; learnedSd: number | null; learnedBatches: number }) {
  if (e.learnedLnS === null || e.learnedBatches < 1) return null;
  const factor = Math.exp(e.learnedLnS);
  return { factor, spread: e.learnedSd === null ? null : factor * e.learnedSd, batches: e.learnedBatches };
}

/**
 * Whether a unit is cooling slower than it used to, from the surface factors fitted on its own ended
 * batches (ln s, one per batch). The rule: take the mean ln s of its last 3 ended batches and the
 * mean of all the ones before them (at least 2); the unit is flagged when the recent mean is lower by
 * more than max(the unit's learned sd of ln s, ln 1.25): more than its usual batch-to-batch spread, and
 * by at least a factor of 1.25 (the recent factor at most 80 % of the earlier one). A failing walk-in
 * (a door left ajar, a fan iced up) then shows on the manager's home while its batches still pass.
 */
export const TREND_RECENT = 3;
export const TREND_MIN_EARLIER = 2;
export const TREND_MIN_DROP = Math.log(1.25);

export type TrendInput = { recentMean: number | null; recentCount: number; earlierMean: number | null; earlierCount: number; learnedSd: number | null };
export type Trend =
  | { status: "too-few" }
  | { status: "steady" | "slower"; recentFactor: number; earlierFactor: number; drop: number; threshold: number };

export function assessTrend(input: TrendInput): Trend {
  if (input.recentCount < TREND_RECENT || input.earlierCount < TREND_MIN_EARLIER || input.recentMean === null || input.earlierMean === null) return { status: "too-few" };
  const drop = input.earlierMean - input.recentMean;
  const threshold = Math.max(input.learnedSd ?? 0, TREND_MIN_DROP);
  return { status: drop > threshold ? "slower" : "steady", recentFactor: Math.exp(input.recentMean), earlierFactor: Math.exp(input.earlierMean), drop, threshold };
}

/** How much lower the recent factor is, in percent of the earlier one. */
export const slowerPercent = (t: { recentFactor: number; earlierFactor: number }) => Math.round((1 - t.recentFactor / t.earlierFactor) * 100);
