import { z } from "zod";
import { badRequest } from "./errors";

// zod building blocks for what arrives at the edge (path segments, search
// parameters, JSON bodies), so every route refuses the same bad input with a
// 400 naming the field instead of handing it to PostgreSQL and failing with a
// 500. PostgreSQL refuses NUL in text and in jsonb, and integers outside the
// column's type; both used to surface as "Something went wrong".
// OWASP Input Validation Cheat Sheet: validate syntactically at the edge,
// with an allow-list of what a field may hold and length limits on every string.

/** PostgreSQL `integer` (int4): the type of every serial id column here. */
export const PG_INT4_MAX = 2_147_483_647;

/** C0 controls but tab, line feed and carriage return; DEL; C1 controls. */
const CONTROL_EXCEPT_WHITESPACE = /[\u0000-\u0008\u000B\u000C\u000E-\u001F\u007F-\u009F]/;
/** Every control character, tab and line breaks included. */
const ANY_CONTROL = /[\u0000-\u001F\u007F-\u009F]/;

/**
 * Text of one line (names, labels, codes): trimmed, at most `max` characters,
 * no control characters. `multiline` lets tab and line breaks through
 * (descriptions), still no NUL or other controls, and no lone surrogate
 * (text JSON can carry but UTF-8 cannot). Messages follow the field
 * name in the 400 ("label: contains a control character").
 */
export function text(options: { max: number; min?: number; multiline?: boolean; tooLong?: string; empty?: string }) {
  const { max, min = 0, multiline = false } = options;
  return z
    .string({ error: "must be text" })
    .trim()
    .min(min, options.empty ?? "cannot be empty")
    .max(max, options.tooLong ?? `is longer than ${max} characters`)
    .refine((value) => !hasControlCharacter(value, multiline), {
      message: multiline ? "contains a control character (only tabs and line breaks are allowed)" : "contains a control character",
    })
    // A lone UTF-16 surrogate has no UTF-8 form; the database driver failed on it.
    .refine((value) => value.isWellFormed(), { message: "is not valid Unicode text" });
}

/** True when `value` holds a control character that no field of ours accepts (multi-line fields allow tab and line breaks). */
export function hasControlCharacter(value: string, multiline = false): boolean {
  return (multiline ? CONTROL_EXCEPT_WHITESPACE : ANY_CONTROL).test(value);
}

/** A row id: a JSON integer from 1 to PostgreSQL's int4 maximum. */
export function id(message = `must be a whole number from 1 to ${PG_INT4_MAX}`) {
  return z.number({ error: message }).int(message).min(1, message).max(PG_INT4_MAX, message);
}

/**
 * A row id in a URL (path segment or search parameter): digits only, no sign,
 * no leading zero, no exponent, within int4. Anything else is not an id, and
 * saying so with a 400 beats a query PostgreSQL would refuse.
 */
export function idText(message = `must be a whole number from 1 to ${PG_INT4_MAX}`) {
  return z
    .string({ error: message })
    .regex(/^[1-9][0-9]{0,9}$/, message)
    .transform(Number)
    .refine((n) => n <= PG_INT4_MAX, message);
}

/** A row id read from URL text (e.g. `?run=7` in the browser) as the number, or null when it is not one by {@link idText}. */
export function idFromText(value: string | null | undefined): number | null {
  const parsed = idText().safeParse(value);
  return parsed.success ? parsed.data : null;
}

/** A UUID (upload ids) in a URL or body, any case. */
export function uuidText(message = "must be an id of the form 3f1c2b4e-9a8d-4c7b-8e6f-5a4b3c2d1e0f") {
  return z.string({ error: message }).regex(/^[0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12}$/i, message);
}

/** The address of a workspace in URLs (lowercase letters, digits, hyphens). */
export const SLUG_PATTERN = /^[a-z0-9][a-z0-9-]{0,63}$/;

export type RouteParams = Record<string, string | string[] | undefined>;

/** Path parameters through `schema`; a 400 naming the parameter when one does not fit. */
export function parseParams<S extends z.ZodType>(params: RouteParams, schema: S): { ok: true; value: z.output<S> } | { ok: false; response: Response } {
  const parsed = schema.safeParse(params);
  return parsed.success ? { ok: true, value: parsed.data } : { ok: false, response: badRequest(parsed.error) };
}

/** A path id that must be a row id (e.g. `runId`), as the number, or a 400 naming it. */
export function parseIdParam(params: RouteParams, name: string): { ok: true; value: number } | { ok: false; response: Response } {
  const parsed = parseParams(params, z.object({ [name]: idText() }));
  return parsed.ok ? { ok: true, value: parsed.value[name] as number } : parsed;
}

/** Reads a URL's search parameters into a plain object (absent keys stay absent, so defaults apply). */
export function searchObject(url: string): Record<string, string> {
  return Object.fromEntries(new URL(url).searchParams.entries());
}

/** The request's search parameters through `schema`; a 400 naming the parameter when one does not fit. */
export function parseSearch<S extends z.ZodType>(request: Request, schema: S): { ok: true; value: z.output<S> } | { ok: false; response: Response } {
  const parsed = schema.safeParse(searchObject(request.url));
  return parsed.success ? { ok: true, value: parsed.data } : { ok: false, response: badRequest(parsed.error) };
}
