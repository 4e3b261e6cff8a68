// The pure parts of share links: the form a QA lead or manager fills in, and the site-local times it uses.
import { z } from "zod";
import { zoneOffsetMs } from "./chart-data";
import { text } from "./forms";
import { MAX_RANGE_DAYS } from "./records-export";

const DAY_MS = 86_400_000;
export const SHARE_MAX_EXPIRY_DAYS = 90;
export const SHARE_DEFAULT_EXPIRY_DAYS = 14;

const localDate = z
  .string()
  .regex(/^\d{4}-\d{2}-\d{2}$/, "share.errors.date")
  .refine((s) => {
    const d = new Date(`${s}T00:00:00Z`);
    return !Number.isNaN(d.getTime()) && d.toISOString().slice(0, 10) === s;
  }, "share.errors.date");

const optional = (v: unknown) => (typeof v === "string" && v.trim() === "" ? undefined : v);

export const ShareFormSchema = z
  .object({
    intent: z.literal("create"),
    label: text().min(1, "forms.required").max(120, "share.errors.labelLong"),
    fromDate: localDate,
    toDate: localDate,
    expiry: z.enum(["days", "at"], { error: "share.errors.expiry" }),
    expiresInDays: z.preprocess(optional, z.coerce.number({ error: "share.errors.days" }).int("share.errors.days").min(1, "share.errors.days").max(SHARE_MAX_EXPIRY_DAYS, "share.errors.days").optional()),
    expiresAt: z.preprocess(optional, z.string().regex(/^\d{4}-\d{2}-\d{2}T\d{2}:\d{2}(:\d{2})?$/, "share.errors.expiryAt").optional()),
    email: z.preprocess(optional, z.email("share.errors.email").max(254, "share.errors.email").optional()),
  })
  .refine((f) => f.fromDate <= f.toDate, { message: "share.errors.toBeforeFrom", path: ["toDate"] })
  .refine((f) => (Date.parse(`${f.toDate}T00:00:00Z`) - Date.parse(`${f.fromDate}T00:00:00Z`)) / DAY_MS + 1 <= MAX_RANGE_DAYS, { message: "share.errors.rangeTooLong", path: ["toDate"] })
  .refine((f) => f.expiry !== "days" || f.expiresInDays !== undefined, { message: "share.errors.days", path: ["expiresInDays"] })
  .refine((f) => f.expiry !== "at" || f.expiresAt !== undefined, { message: "share.errors.expiryAt", path: ["expiresAt"] });

export type ShareForm = z.infer<typeof ShareFormSchema>;

/** The instant a site-local wall-clock time ("2025-03-04T14:05") names in the zone. */
export function instantOfLocal(value: string, timeZone: string) {
  const wall = Date.parse(`${value.length === 16 ? `${value}:00` : value}Z`);
  // The second pass settles the offset across a clock change.
  let t = wall - zoneOffsetMs(wall, timeZone);
  t = wall - zoneOffsetMs(t, timeZone);
  return t;
}

/** When the link stops working, or the field and message that say why the choice is refused. */
export function expiryOf(form: ShareForm, timeZone: string, now = Date.now()): { ok: true; at: Date } | { ok: false; field: string; message: string } {
  if (form.expiry === "days") return { ok: true, at: new Date(now + form.expiresInDays! * DAY_MS) };
  const at = instantOfLocal(form.expiresAt!, timeZone);
  if (Number.isNaN(at)) return { ok: false, field: "expiresAt", message: "share.errors.expiryAt" };
  if (at <= now) return { ok: false, field: "expiresAt", message: "share.errors.expiryPast" };
  // A minute of slack: the form's "90 days from now" was computed when the page was drawn.
  if (at > now + SHARE_MAX_EXPIRY_DAYS * DAY_MS + 60_000) return { ok: false, field: "expiresAt", message: "share.errors.expiryTooFar" };
  return { ok: true, at: new Date(at) };
}

/** "2025-03-04T14:05" of an instant in the zone, for a datetime-local field. */
export function localDateTimeOf(ms: number, timeZone: string) {
  return new Date(ms + zoneOffsetMs(ms, timeZone)).toISOString().slice(0, 16);
}

export type ShareStatus = "active" | "expired" | "revoked";
export function statusOf(link: { expiresAt: number; revokedAt: number | null }, now = Date.now()): ShareStatus {
  if (link.revokedAt !== null) return "revoked";
  return link.expiresAt <= now ? "expired" : "active";
}

/** A requested range lies inside the link's (both are site-local dates, both ends included). */
export const withinRange = (asked: { from: string; to: string }, link: { from: string; to: string }) => asked.from >= link.from && asked.to <= link.to;
