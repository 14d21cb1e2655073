import { z } from "zod";
import { can, ROLES, type Capability, type Role } from "@/lib/auth/roles";
import { slugSchema } from "@/lib/auth/schemas";
import { errorBodySchema } from "@/lib/http/error-body";
import { idText } from "@/lib/http/params";

// How one API route is described. Each area file (runs.ts, intake.ts, …)
// exports a list of ApiRoute entries; document.ts turns them into the
// OpenAPI document and the reference page reads the same entries. Request
// schemas are the ones the handlers parse (imported from the domains, never
// copied); answers are the domains' response schemas.

export const HTTP_METHODS = ["GET", "POST", "PUT", "PATCH", "DELETE"] as const;
export type HttpMethod = (typeof HTTP_METHODS)[number];

/** The parts of the API, in the order the document and the reference page list them. */
export const AREAS = [
  { key: "results", title: "Results", description: "The Desk, Catalogue, Indicator timeline, Region map and comparisons of completed runs." },
  { key: "runs", title: "Runs", description: "Starting, following, cancelling, rerunning and exporting analyses." },
  { key: "intake", title: "Intake", description: "Uploads, boundary and panel versions, validation, publishing and indicator metadata." },
  { key: "reforms", title: "Reforms", description: "Crosswalks between boundary versions and panels harmonised through them." },
  { key: "digests", title: "Digests", description: "Your own digest subscription, its preview, and who subscribes." },
  { key: "team", title: "Team", description: "Members, roles, invitations and the audit trail." },
  { key: "account", title: "Account and workspaces", description: "Your own account, new workspaces, accepting invitations and unsubscribing from digests." },
  { key: "reference", title: "Reference", description: "This document." },
] as const;
export type AreaKey = (typeof AREAS)[number]["key"];

/**
 * Who may call a route.
 * - member: a member of the workspace in the path holding `capability`
 *   (memberRoute); with a session cookie or a personal API token, unless
 *   `sessionOnly` (token management itself is never done with a token).
 * - signed-in: any signed-in user, no workspace involved (session only).
 * - public: no sign-in; `rule` says what the credential is, if any.
 */
export type Access =
  | { kind: "member"; capability: Capability; sessionOnly?: boolean }
  | { kind: "signed-in"; rule?: string }
  | { kind: "public"; rule: string };

export const member = (capability: Capability, options: { sessionOnly?: boolean } = {}): Access => ({ kind: "member", capability, ...options });
export const signedIn = (rule?: string): Access => ({ kind: "signed-in", rule });
export const publicAccess = (rule: string): Access => ({ kind: "public", rule });

/** Roles holding `capability`, most senior first (lib/auth/roles.ts is the one source). */
export function rolesFor(capability: Capability): Role[] {
  return ROLES.filter((role) => can(role, capability));
}

/** One answer of a route: JSON with a schema, another media type, or no body (204). */
export interface Answer {
  description: string;
  /** Response schema (JSON unless `contentType` says otherwise). */
  schema?: z.ZodType;
  /** e.g. "text/csv; charset=utf-8"; several media types when the answer depends on a parameter. */
  contentType?: string | string[];
}

/** Error statuses a route may answer beyond those every route of its kind shares. */
export type ErrorStatus = 400 | 401 | 403 | 404 | 409 | 410 | 413 | 422 | 429 | 500 | 503;

export interface ApiRoute {
  area: AreaKey;
  method: HttpMethod;
  /** OpenAPI path: `{param}` for each `[param]` folder under app/api. */
  path: string;
  summary: string;
  description?: string;
  access: Access;
  /** Path parameters other than the workspace's `slug` (added for every /api/w/{slug} path). */
  params?: z.ZodObject;
  query?: z.ZodObject;
  /** The zod schema of the JSON body the handler parses. */
  body?: z.ZodType;
  /** A body that is not JSON (e.g. a form). */
  bodyContentType?: string;
  /** Answers by status: the successful ones, and any refusal whose body is not the error body (e.g. a failed upload's 422). */
  answers: Partial<Record<200 | 201 | 202 | 204 | 422, Answer>>;
  /** Errors particular to this route, with what they mean here. */
  errors?: Partial<Record<ErrorStatus, string>>;
  /** The media type of error answers when they are not the one JSON error body (e.g. an HTML page). */
  errorContentType?: string;
}

/** The workspace's address in every /api/w/{slug}/… path. */
export const slugParams = z.object({ slug: slugSchema.meta({ description: "The workspace's address (lowercase letters, digits and hyphens)." }) });

/** Path parameters that are row ids (`runId`, `userId`, …), parsed as the handlers parse them. */
export function idParams<const Name extends string>(name: Name, description: string) {
  return z.object({ [name]: idText().meta({ description, param: { description } }) } as Record<Name, ReturnType<typeof idText>>);
}

/** What each error status means when a route does not say more. */
export const ERROR_MEANINGS: Record<ErrorStatus, string> = {
  400: "The request is not valid: a body field, path or search parameter failed its schema (`field` names it), or the body is not JSON.",
  401: "Not signed in (no valid session or token).",
  403: "A member whose role does not hold this capability; or a request changing data sent from another site's page.",
  404: "No such workspace, or you are not a member of it; or no such row in it.",
  409: "The request conflicts with the current state.",
  410: "The link or token is no longer valid.",
  413: "The body is too large.",
  422: "The input names something the stored data does not have, or cannot be processed as asked.",
  429: "Too many attempts; wait and try again.",
  500: "Something failed on Tessera's side.",
  503: "The database or the file store is briefly unavailable (`retryable: true`).",
};

/** Errors every route of an access kind can answer, with the route's own on top. */
export function errorsOf(route: ApiRoute): [ErrorStatus, string][] {
  const shared: ErrorStatus[] =
    route.access.kind === "member" ? [400, 401, 403, 404, 500, 503] : route.access.kind === "signed-in" ? [401, 500, 503] : [500];
  const own = route.errors ?? {};
  const statuses = [...new Set<ErrorStatus>([...shared, ...(Object.keys(own).map(Number) as ErrorStatus[])])].sort((a, b) => a - b);
  return statuses.filter((status) => !(status in route.answers)).map((status) => [status, own[status] ?? ERROR_MEANINGS[status]]);
}

export { errorBodySchema };

/** Security schemes of the document: the browser's session cookie and personal API tokens. */
export const SECURITY_SCHEMES = {
  sessionCookie: {
    type: "apiKey",
    in: "cookie",
    name: "next-auth.session-token",
    description: "The session of a signed-in browser (named `__Secure-next-auth.session-token` when Tessera is served over https). A page of another site cannot change data with it: such requests are refused (403).",
  },
  bearerAuth: {
    type: "http",
    scheme: "bearer",
    description: "A personal API token of one workspace (Access tokens, on your profile): `Authorization: Bearer <token>`. It acts with its owner's role, never above it.",
  },
} as const;

/** The OpenAPI security requirement of an access rule ([] = no credential). */
export function securityOf(access: Access): Record<string, string[]>[] {
  if (access.kind === "public") return [];
  if (access.kind === "signed-in" || access.sessionOnly) return [{ sessionCookie: [] }];
  return [{ sessionCookie: [] }, { bearerAuth: [] }];
}

/** Who may call the route, in words (the reference page and the operation's description). */
export function accessSentence(access: Access): string {
  if (access.kind === "public") return `Public: ${access.rule}`;
  if (access.kind === "signed-in") return `Any signed-in user${access.rule ? `: ${access.rule}` : "."}`;
  const roles = rolesFor(access.capability);
  return `Members with the role ${roles.join(", ")} (capability ${access.capability})${access.sessionOnly ? "; session only, not with an API token" : ""}.`;
}
