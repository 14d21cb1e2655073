import type { z } from "zod";
import type { ErrorBody } from "./error-body";

// The errors that carry their HTTP answer, and the two answers built without
// one. Domain code throws these classes (or subclasses with its own name);
// errorResponse in lib/http/route.ts is the one place that turns any error
// into a response. No imports beyond zod's types: pure domain rules and
// client-side schemas may use this file.

/** An error whose answer is `status` with `{ error: message, ...details }`. */
export class HttpError extends Error {
  constructor(
    readonly status: number,
    message: string,
    /** Members of the JSON answer beside `error` (e.g. `field`). */
    readonly details: Record<string, unknown> = {},
  ) {
    super(message);
    this.name = "HttpError";
  }
}

/**
 * A request that is well-formed but cannot be accepted; `field` names the
 * culprit. 400 by default; 422 where the input names something the stored
 * data does not have (an unknown indicator or period of a panel version).
 */
export class InputError extends HttpError {
  constructor(
    message: string,
    readonly field: string | null = null,
    status: 400 | 422 = 400,
  ) {
    super(status, message, { field });
    this.name = "InputError";
  }
}

/** Something named in the URL that does not exist inside a workspace you can see (HTTP 404). */
export class NotFoundError extends HttpError {
  constructor(message: string) {
    super(404, message);
    this.name = "NotFoundError";
  }
}

/** A request that is understood and allowed but conflicts with the current state (HTTP 409). */
export class ConflictError extends HttpError {
  constructor(message: string) {
    super(409, message);
    this.name = "ConflictError";
  }
}

export function jsonError(status: number, message: string, extra: Record<string, unknown> = {}): Response {
  // Typed against the documented shape (error-body.ts), so the API reference and the answers cannot drift apart.
  return Response.json({ error: message, ...extra } satisfies ErrorBody, { status });
}

/** A zod failure (body, path or search parameters) as a 400 naming the first bad field: `{ error: "field: message", field, issues }`. */
export function badRequest(error: z.ZodError): Response {
  const first = error.issues[0];
  const field = first?.path.map(String).join(".") || null;
  const message = first ? (field ? `${field}: ${first.message}` : first.message) : "The request is not valid.";
  return jsonError(400, message, {
    field,
    issues: error.issues.map((i) => ({ field: i.path.map(String).join("."), message: i.message })),
  });
}
