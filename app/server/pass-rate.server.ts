// The one definition of a pass rate, shared by the manager's home (this week) and QA's analytics (any
// period), so the two never disagree. A batch counts once it has ended (any state but cooling), in the
// period its end falls in. It passed when it cooled the first time (state `cooled`); it failed when it
// cooled only after a reheat (`cooled_after_reheat`) or was discarded.
import { and, sql, type SQL } from "drizzle-orm";
import { batches } from "~db/schema";

const instant = (at: SQL | Date) => (at instanceof Date ? sql`${at.toISOString()}::timestamptz` : at);

/** Batches that ended at or after `from` (and before `until`, when given). */
export const endedBetween = (from: SQL | Date, until?: SQL | Date) =>
  and(sql`${batches.state} <> 'cooling'`, sql`${batches.endedAt} >= ${instant(from)}`, until ? sql`${batches.endedAt} < ${instant(until)}` : undefined)!;

/** The counts of a pass rate, as columns of an aggregate select over `batches`. */
export const passCounts = () => ({
  ended: sql<number>`count(*)`.mapWith(Number),
  passed: sql<number>`count(*) filter (where ${batches.state} = 'cooled')`.mapWith(Number),
});
