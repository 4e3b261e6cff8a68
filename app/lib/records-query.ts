// What the records view can be asked: filters, sort and page, shared by its loader and its links.
// The server parses each parameter on its own (app/server/records.server.ts) so one bad value falls
// back to its default, and says so, without losing the others.

export const recordOutcomes = ["cooling", "cooled", "cooled_after_reheat", "discarded"] as const;
export type RecordOutcome = (typeof recordOutcomes)[number];

export const recordSortKeys = ["started", "product", "outcome", "site"] as const;
export type RecordSortKey = (typeof recordSortKeys)[number];
export const recordPageSizes = [25, 50, 100] as const;
export const recordFirstDir: Record<RecordSortKey, "asc" | "desc"> = { started: "desc", product: "asc", outcome: "asc", site: "asc" };

export type RecordsQuery = {
  from: string;
  to: string;
  site: string | null;
  product: string | null;
  method: string | null;
  equipment: string | null;
  outcome: RecordOutcome | null;
  cook: string | null;
  late: boolean;
  unverified: boolean;
  sort: RecordSortKey;
  dir: "asc" | "desc";
  page: number;
  size: (typeof recordPageSizes)[number];
};

export type RecordsFilterKey = "site" | "product" | "method" | "equipment" | "outcome" | "cook" | "late" | "unverified";
export const recordFilterKeys: RecordsFilterKey[] = ["site", "product", "method", "equipment", "outcome", "cook", "late", "unverified"];

/** The view's address with some of its query changed; defaults are left out so links stay short. */
export function recordsHref(query: RecordsQuery, change: Partial<RecordsQuery>, defaults: Pick<RecordsQuery, "from" | "to">) {
  const next = { ...query, ...change };
  const params = new URLSearchParams();
  if (next.from !== defaults.from || next.to !== defaults.to) {
    params.set("from", next.from);
    params.set("to", next.to);
  }
  for (const key of ["site", "product", "method", "equipment", "outcome", "cook"] as const) {
    const v = next[key];
    if (v) params.set(key, v);
  }
  if (next.late) params.set("late", "1");
  if (next.unverified) params.set("unverified", "1");
  if (next.sort !== "started") params.set("sort", next.sort);
  if (next.dir !== recordFirstDir[next.sort]) params.set("dir", next.dir);
  if (next.page !== 1) params.set("page", String(next.page));
  if (next.size !== 25) params.set("size", String(next.size));
  const s = params.toString();
  return s ? `?${s}` : "?";
}

export type StageCell = { stage: number; status: string; limit: number; deadline: number | null; metAt: number | null; metValue: number | null };

export type RecordRow = {
  id: string;
  siteId: string;
  siteName: string;
  timeZone: string;
  unit: "F" | "C";
  product: string;
  lotCode: string;
  method: string;
  equipment: string | null;
  state: RecordOutcome;
  startedAt: number;
  endedAt: number | null;
  startedBy: string | null;
  readingCount: number;
  lateCount: number;
  actionCount: number;
  signedBy: string | null;
  signedAt: number | null;
  stages: StageCell[];
};

export type RecordTotals = { batches: number; ended: number; cooled: number; reheated: number; discarded: number; cooling: number; unverified: number; withLate: number; passRate: number | null };

