/**
 * Why a batch needs a manager, worst first. The SQL for each lives in
 * app/server/review-queue.server.ts (`reasonConditions`); this list is what both sides share: the
 * order, the weight a queue sorts by, and how a badge looks (a shape as well as a colour).
 *
 * - missed_stage: a deadline of the current attempt passed without a reading at or below its limit,
 *   and the batch is still cooling (or was discarded and nobody has signed it yet).
 * - off_track: still cooling, no stage missed yet, and the prediction says it will miss (verdict "behind").
 * - reading_overdue: still cooling and the next reading is later than its due time plus the site's grace.
 * - at_risk: still cooling, no stage missed yet, and the prediction says it is cutting it close (verdict "tight").
 *
 * Once the record shows a missed stage, the forecast is moot: such a batch carries missed_stage and
 * neither off_track nor at_risk (as the alerts raise no off-track alert for it).
 * - action_to_confirm: a corrective action nobody has confirmed yet.
 * - changed_after_signing: ended and signed, but the record gained entries or actions since.
 * - awaiting_verification: ended and never signed.
 */
export const reviewReasons = [
  { code: "missed_stage", severity: 7, shape: "octagon", tone: "ember" },
  { code: "off_track", severity: 6, shape: "triangle-down", tone: "ember" },
  { code: "reading_overdue", severity: 5, shape: "clock", tone: "amber" },
  { code: "at_risk", severity: 4, shape: "triangle", tone: "amber" },
  { code: "action_to_confirm", severity: 3, shape: "square", tone: "glacier" },
  { code: "changed_after_signing", severity: 2, shape: "diamond", tone: "glacier" },
  { code: "awaiting_verification", severity: 1, shape: "circle", tone: "glacier" },
] as const;

export type ReasonCode = (typeof reviewReasons)[number]["code"];
export type ReasonShape = (typeof reviewReasons)[number]["shape"];

export const getReason = (code: ReasonCode) => reviewReasons.find((r) => r.code === code)!;

/** How the queue can be sorted and paged, and what each starts from (shared by the loader and its links). */
export const sortKeys = ["severity", "started", "product", "due"] as const;
export type SortKey = (typeof sortKeys)[number];
export const pageSizes = [10, 25, 50] as const;
export const firstDir: Record<SortKey, "asc" | "desc"> = { severity: "desc", started: "desc", product: "asc", due: "asc" };

export type QueueQuery = { sort: SortKey; dir: "asc" | "desc"; reason: ReasonCode | null; q: string; page: number; size: (typeof pageSizes)[number] };
export const defaultQueueQuery: QueueQuery = { sort: "severity", dir: "desc", reason: null, q: "", page: 1, size: 25 };
