import { z } from "zod";

/** zod issues as one message per field, for `data({ errors }, { status: 400 })`. */
export function fieldErrors(error: z.ZodError): Record<string, string> {
  const out: Record<string, string> = {};
  for (const issue of error.issues) {
    const key = String(issue.path[0] ?? "form");
    out[key] ??= issue.message;
  }
  return out;
}

/**
 * Control characters no keyboard types: NUL (which PostgreSQL text cannot hold at all), the other
 * C0 codes and DEL. Tab, line feed and carriage return stay allowed, for notes.
 */
const CONTROL = /[\u0000-\u0008\u000b\u000c\u000e-\u001f\u007f]/;

/**
 * Free text as people type it: trimmed, and refused with `message` when it holds a control
 * character. Chain the length checks after it: `text().min(1, "forms.required").max(80)`.
 */
export const text = (message = "forms.controlCharacters") => z.string().trim().refine((s) => !CONTROL.test(s), message);
