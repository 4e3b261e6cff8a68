// The pure parts of QA's analytics: the period and its defaults, the shifts, the histogram of time
// to the first stage limit. Shared by the server (which counts) and the page (which draws).
import { z } from "zod";
import { ExportRangeSchema, localDateOf } from "./records-export";

const DAY_MS = 86_400_000;

/** Groups with fewer ended batches than this are shown but marked as too few to judge. */
export const MIN_GROUP = 5;

/** The most ended batches a period times to stage 1 (a busy site's year is about 5,000). */
export const MAX_TIMED = 20_000;

/** A group's pass rate: `key` identifies it, `name` is shown (a method's code is translated on the page). */
export type Group = { key: string; name: string | null; ended: number; passed: number };

/** The default period: the last 12 weeks (84 days), today included, in the site's time zone. */
export const DEFAULT_WEEKS = 12;

/** With several zones (the organisation view), "today" is the latest of their dates, so no site's today is cut off. */
export function defaultPeriod(timeZone: string | readonly string[], now = Date.now()) {
  const zones = typeof timeZone === "string" ? [timeZone] : timeZone;
  const to = zones.map((z) => localDateOf(now, z)).reduce((a, b) => (b > a ? b : a));
  const from = new Date(Date.parse(`${to}T00:00:00Z`) - (DEFAULT_WEEKS * 7 - 1) * DAY_MS).toISOString().slice(0, 10);
  return { from, to };
}

/**
 * Shifts by the local hour a batch started: [from, to) in whole hours; the last one runs over
 * midnight. The SQL that buckets batches is built from this list, so page and query agree.
 */
export const shifts = [
  { code: "early", fromHour: 5, toHour: 13 },
  { code: "late", fromHour: 13, toHour: 21 },
  { code: "night", fromHour: 21, toHour: 5 },
] as const;
export type ShiftCode = (typeof shifts)[number]["code"];

export function shiftOfHour(hour: number): ShiftCode {
  for (const s of shifts) {
    const inside = s.fromHour < s.toHour ? hour >= s.fromHour && hour < s.toHour : hour >= s.fromHour || hour < s.toHour;
    if (inside) return s.code;
  }
  throw new Error(`no shift holds hour ${hour}`);
}

export const hourText = (h: number) => `${String(h).padStart(2, "0")}:00`;

const isRealDate = (s: string) => {
  const d = new Date(`${s}T00:00:00Z`);
  return /^\d{4}-\d{2}-\d{2}$/.test(s) && !Number.isNaN(d.getTime()) && d.toISOString().slice(0, 10) === s;
};

export const ScopeSchema = z.enum(["all"]);
export type AnalyticsParam = "from" | "to" | "scope";
export type AnalyticsQuery = { from: string; to: string; scope: "site" | "all" };
/** Why a period was set aside: a date that is not a real YYYY-MM-DD day, the start after the end, or more than a year. */
export type PeriodProblem = "date" | "order" | "length";

/**
 * The period and scope from the address. A period that cannot be used sends both dates back to the
 * default; `ignored` names the parameters set aside and `problem` says why, so the page can say so.
 */
export function parseAnalyticsQuery(params: URLSearchParams, timeZone: string, now = Date.now()) {
  const ignored: AnalyticsParam[] = [];
  const fallback = defaultPeriod(timeZone, now);
  const raw = (k: AnalyticsParam) => {
    const v = params.get(k);
    return v === null || v.trim() === "" ? undefined : v.trim();
  };
  const given = (["from", "to"] as const).filter((k) => raw(k) !== undefined);
  const asked = { from: raw("from") ?? fallback.from, to: raw("to") ?? fallback.to };
  const parsed = ExportRangeSchema.safeParse(asked);
  let period = fallback;
  let problem: PeriodProblem | null = null;
  if (parsed.success) period = parsed.data;
  else {
    const badDates = given.filter((k) => !isRealDate(raw(k)!));
    problem = badDates.length ? "date" : asked.from > asked.to ? "order" : "length";
    if (problem === "date") ignored.push(...badDates);
    else ignored.push(...given);
  }
  const scopeRaw = raw("scope");
  let scope: AnalyticsQuery["scope"] = "site";
  if (scopeRaw !== undefined) {
    if (ScopeSchema.safeParse(scopeRaw).success) scope = "all";
    else ignored.push("scope");
  }
  const query: AnalyticsQuery = { ...period, scope };
  // The default stood in for the period: nothing asked, or nothing usable.
  const defaulted = given.length === 0 || problem !== null;
  return { query, ignored, problem, defaulted };
}

/** A histogram of minutes to the first stage limit: bins of limit/8 holding (from, to], up to twice the limit, then one bin for longer. */
export type Histogram = { binMinutes: number; limitMinutes: number; bins: { fromMin: number; toMin: number | null; count: number }[] };

export const HISTOGRAM_BINS = 16;

export function binMinutes(minutes: readonly number[], limitMinutes: number): Histogram {
  const width = limitMinutes / (HISTOGRAM_BINS / 2);
  const bins = Array.from({ length: HISTOGRAM_BINS + 1 }, (_, i) => ({ fromMin: i * width, toMin: i < HISTOGRAM_BINS ? (i + 1) * width : null, count: 0 }));
  for (const m of minutes) {
    if (!Number.isFinite(m) || m < 0) continue;
    // Right-closed bins, (from, to]: a reading exactly at the limit falls in the last bin up to it, as it met the stage.
    bins[Math.min(HISTOGRAM_BINS, Math.max(0, Math.ceil(m / width) - 1))].count++;
  }
  return { binMinutes: width, limitMinutes, bins };
}

/** The median of a list, or null when it is empty. */
export function median(values: readonly number[]) {
  if (!values.length) return null;
  const s = [...values].sort((a, b) => a - b);
  const mid = s.length >> 1;
  return s.length % 2 ? s[mid] : (s[mid - 1] + s[mid]) / 2;
}

/** "1 h 05 min", "45 min", "2 h": durations on the page, in whole minutes. */
export function formatMinutes(min: number) {
  const m = Math.round(min);
  const h = Math.floor(m / 60);
  const r = m % 60;
  if (!h) return `${r} min`;
  return r ? `${h} h ${String(r).padStart(2, "0")} min` : `${h} h`;
}

/** A whole-number percentage, or null for an empty group. */
export const percent = (part: number, whole: number) => (whole ? Math.round((part / whole) * 100) : null);
