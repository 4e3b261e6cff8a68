// The pure parts of the records export: the date range in the site's zone, wall-clock dates for a
// spreadsheet, CSV quoting and the guard against cells that a spreadsheet would run as formulas.
import { z } from "zod";
import { zoneOffsetMs } from "./chart-data";

const DAY_MS = 86_400_000;
export const MAX_RANGE_DAYS = 366;

const localDate = z
  .string({ error: "Give the date as YYYY-MM-DD" })
  .regex(/^\d{4}-\d{2}-\d{2}$/, "Give the date as YYYY-MM-DD")
  .refine((s) => {
    const d = new Date(`${s}T00:00:00Z`);
    return !Number.isNaN(d.getTime()) && d.toISOString().slice(0, 10) === s;
  }, "That date does not exist");

export const ExportRangeSchema = z
  .object({ from: localDate, to: localDate })
  .refine((r) => r.from <= r.to, { message: "The start date must not be after the end date", path: ["to"] })
  .refine((r) => (Date.parse(`${r.to}T00:00:00Z`) - Date.parse(`${r.from}T00:00:00Z`)) / DAY_MS + 1 <= MAX_RANGE_DAYS, {
    message: `A range covers at most ${MAX_RANGE_DAYS} days`,
    path: ["to"],
  });

export const exportSheets = ["batches", "readings", "actions"] as const;
export type ExportSheet = (typeof exportSheets)[number];
export const SheetSchema = z.enum(exportSheets, { error: "sheet is one of batches, readings, actions" });

/** The local calendar date of an instant in a zone, YYYY-MM-DD. */
export function localDateOf(ms: number, timeZone: string) {
  return new Date(ms + zoneOffsetMs(ms, timeZone)).toISOString().slice(0, 10);
}

/** The instant of local midnight starting `date` in the zone (the first instant of that day after a DST jump). */
export function startOfLocalDay(date: string, timeZone: string) {
  const wall = Date.parse(`${date}T00:00:00Z`);
  let t = wall - zoneOffsetMs(wall, timeZone);
  t = wall - zoneOffsetMs(t, timeZone);
  return t;
}

/** Last week, Monday to Sunday, in the site's zone. */
export function lastWeek(timeZone: string, now = Date.now()) {
  const today = localDateOf(now, timeZone);
  const d = new Date(`${today}T00:00:00Z`);
  const sinceMonday = (d.getUTCDay() + 6) % 7;
  const monday = new Date(d.getTime() - (sinceMonday + 7) * DAY_MS);
  const sunday = new Date(monday.getTime() + 6 * DAY_MS);
  return { from: monday.toISOString().slice(0, 10), to: sunday.toISOString().slice(0, 10) };
}

/** The instants a range of local dates covers: [start of `from`, start of the day after `to`). */
export function rangeInstants(range: { from: string; to: string }, timeZone: string) {
  const next = new Date(Date.parse(`${range.to}T00:00:00Z`) + DAY_MS).toISOString().slice(0, 10);
  return { fromMs: startOfLocalDay(range.from, timeZone), toMs: startOfLocalDay(next, timeZone) };
}

/**
 * A Date whose UTC fields are the site's wall-clock time at `ms`. Spreadsheet dates carry no zone:
 * the file must hold the time a person in the kitchen read on the clock, not UTC.
 */
export function wallClock(ms: number, timeZone: string) {
  return new Date(ms + zoneOffsetMs(ms, timeZone));
}

/** "2025-03-04 14:05" in the site's zone, for CSV and file names. */
export function wallClockText(ms: number, timeZone: string) {
  return wallClock(ms, timeZone).toISOString().slice(0, 16).replace("T", " ");
}

/**
 * Text that a spreadsheet would read as a formula (=, +, -, @, or a leading tab or CR) gets a leading
 * apostrophe. Only text: numbers are written as numbers, so a −18 °C reading stays −18.
 */
export function neutraliseFormula(text: string) {
  return /^[=+\-@\t\r]/.test(text) ? `'${text}` : text;
}

export type CsvValue = string | number | boolean | Date | null | undefined;

/** One RFC 4180 field. Dates are expected already as wall-clock text; a Date here is written as wall-clock UTC fields. */
export function csvField(value: CsvValue) {
  if (value === null || value === undefined) return "";
  if (typeof value === "number") return Number.isFinite(value) ? String(value) : "";
  if (typeof value === "boolean") return value ? "true" : "false";
  const text = value instanceof Date ? value.toISOString().slice(0, 16).replace("T", " ") : neutraliseFormula(value);
  return /[",\r\n]/.test(text) || text !== text.trim() ? `"${text.replace(/"/g, '""')}"` : text;
}

export const csvLine = (values: CsvValue[]) => values.map(csvField).join(",") + "\r\n";

/** A file name without characters that trouble file systems or the header. */
export function exportFileName(siteName: string, range: { from: string; to: string }, ext: string) {
  const site = siteName.normalize("NFKD").replace(/[\u0300-\u036f]/g, "").replace(/[^A-Za-z0-9]+/g, "-").replace(/^-+|-+$/g, "").toLowerCase() || "site";
  return `${site}-cooling-records-${range.from}-to-${range.to}.${ext}`;
}
