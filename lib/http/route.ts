import type { z } from "zod";
import { requireMember, type MemberContext } from "@/lib/auth/guard";
import type { Capability } from "@/lib/auth/roles";
import { isDatabaseUnavailable } from "@/lib/db";
import { UNAVAILABLE_MESSAGES } from "@/lib/service-unavailable";
import { StorageUnavailableError, StoredFileChecksumError } from "@/lib/storage/errors";
import { badRequest, HttpError, jsonError } from "./errors";
import { SLUG_PATTERN } from "./params";

// Route-handler wrapper: the guard runs first, then the body is parsed with
// its zod schema, so neither can be forgotten in a handler. Whatever the
// handler throws becomes its answer through errorResponse.

type Params = Record<string, string | string[] | undefined>;
type RouteContext = { params: Promise<Params> };

export type MemberHandler<Body> = (args: {
  request: Request;
  member: MemberContext;
  body: Body;
  params: Params;
}) => Promise<Response>;

/**
 * The one map from errors to responses. An HttpError (lib/http/errors.ts, and
 * the domain errors extending it) answers its status with its message and
 * details; an outage of the database or the file store is a 503; anything
 * else is logged and becomes a 500.
 */
export function errorResponse(error: unknown): Response {
  if (error instanceof HttpError) {
    const response = jsonError(error.status, error.message, error.details);
    // A rate limit's refusal says when to come back (RFC 9110 §10.2.3).
    if (error.status === 429 && typeof error.details.retryAfterSeconds === "number") response.headers.set("Retry-After", String(error.details.retryAfterSeconds));
    return response;
  }
  // Outages pass: 503 with a plain sentence; the log keeps one line, not a stack per request.
  const outage = error instanceof StorageUnavailableError ? error.message : isDatabaseUnavailable(error) ? UNAVAILABLE_MESSAGES.database : null;
  if (outage) {
    console.warn(`[tessera] service unavailable: ${error instanceof StorageUnavailableError ? error.detail : String(error)}`);
    return jsonError(503, outage, { retryable: true });
  }
  // A version's file that no longer has its recorded checksum: say which, so the steward can act; never its bytes.
  if (error instanceof StoredFileChecksumError) {
    console.error(`[tessera] ${error.message}`);
    return jsonError(error.status, error.message);
  }
  console.error("[tessera] route handler failed", error);
  return jsonError(500, "Something went wrong on our side. Try again; if it keeps happening, tell your manager.");
}

/**
 * Every answer of a workspace route depends on who asks, so no cache may keep
 * it (OWASP Session Management Cheat Sheet, "Web Content Caching"); proxy.ts
 * says the same for every /api answer, this holds it where proxy.ts does not run.
 */
export function noStore(response: Response): Response {
  try {
    response.headers.set("cache-control", "no-store");
    return response;
  } catch {
    // Immutable headers (Response.redirect): copy them into a response we may change.
    const headers = new Headers(response.headers);
    headers.set("cache-control", "no-store");
    return new Response(response.body, { status: response.status, statusText: response.statusText, headers });
  }
}

async function readJson(request: Request): Promise<{ ok: true; value: unknown } | { ok: false }> {
  const text = await request.text();
  if (text.trim() === "") return { ok: true, value: {} };
  try {
    return { ok: true, value: JSON.parse(text) };
  } catch {
    return { ok: false };
  }
}

export function memberRoute<Schema extends z.ZodType | undefined = undefined>(
  options: {
    capability: Capability;
    body?: Schema;
    workspaceParam?: string;
    /** Refuse `Authorization: Bearer` tokens: the routes that create, list and revoke tokens. */
    sessionOnly?: boolean;
  },
  handler: MemberHandler<Schema extends z.ZodType ? z.infer<Schema> : undefined>,
) {
  const answer = async (request: Request, context: RouteContext): Promise<Response> => {
    try {
      const params = await context.params;
      const slugParam = options.workspaceParam ?? "slug";
      const ref = params[slugParam];
      if (typeof ref !== "string") return jsonError(404, "There is no such workspace, or you are not a member of it.");
      // Only the shape is checked here, which tells a caller nothing about which workspaces exist.
      if (!SLUG_PATTERN.test(ref)) return jsonError(400, `${slugParam}: not a workspace address (lowercase letters, digits and hyphens)`, { field: slugParam });
      // The one gate, for a session and for an API token alike (lib/auth/guard.ts).
      const member = await requireMember(ref, options.capability, { request, sessionOnly: options.sessionOnly });
      let body: unknown = undefined;
      if (options.body) {
        const raw = await readJson(request);
        if (!raw.ok) return jsonError(400, "The request body is not valid JSON.", { field: null });
        const parsed = options.body.safeParse(raw.value);
        if (!parsed.success) return badRequest(parsed.error);
        body = parsed.data;
      }
      return await handler({
        request,
        member,
        body: body as Schema extends z.ZodType ? z.infer<Schema> : undefined,
        params,
      });
    } catch (error) {
      return errorResponse(error);
    }
  };
  const route = async (request: Request, context: RouteContext): Promise<Response> => noStore(await answer(request, context));
  // The schema travels with the handler so the route fuzzer
  // (tests/integration/security/fuzz-routes.test.ts) mutates exactly the fields this route parses.
  return Object.assign(route, { bodySchema: options.body });
}
