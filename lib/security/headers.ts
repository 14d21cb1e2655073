import { STATIC_SECURITY_HEADERS } from "./static-headers.mjs";

// Which headers an answer of proxy.ts carries, decided from the path alone.
// Pure (no next or environment imports) so a unit test holds every rule.
//
// Cache-Control: no-store on everything that may depend on who is signed in:
// every API answer, every page (workspace pages, invitations, sign-in, the
// home redirect). A shared or back-button cache must never replay one user's
// data, a CSRF token or an invitation link (OWASP Session Management Cheat
// Sheet, "Web Content Caching"). Only files served from public/ (a name with an
// extension, outside /api) may be cached, and the one public API answer that
// is the same for everyone: the OpenAPI document.

export { STATIC_SECURITY_HEADERS };

export const HSTS = "max-age=31536000; includeSubDomains";

/** The public API document (app/api/openapi.json/route.ts): no user's data, the same for everyone. */
export const OPENAPI_PATH = "/api/openapi.json";
export const OPENAPI_CACHE_CONTROL = "public, max-age=300";

/** True for paths whose answers may be cached: files from public/, named with an extension. */
export function isPublicFile(pathname: string): boolean {
  if (pathname === "/api" || pathname.startsWith("/api/")) return false;
  const last = pathname.slice(pathname.lastIndexOf("/") + 1);
  return /\.[A-Za-z0-9]{1,8}$/.test(last);
}

export interface HeaderContext {
  pathname: string;
  /** This response's Content-Security-Policy (with its nonce). */
  csp: string;
  /** The app is served over https: add Strict-Transport-Security. */
  https: boolean;
}

/** Every header proxy.ts sets on an answer for `pathname`, redirects and refusals included. */
export function securityHeaders(context: HeaderContext): [string, string][] {
  const headers: [string, string][] = STATIC_SECURITY_HEADERS.map((h) => [h.key, h.value]);
  headers.push(["Content-Security-Policy", context.csp]);
  if (context.https) headers.push(["Strict-Transport-Security", HSTS]);
  if (context.pathname === OPENAPI_PATH) headers.push(["Cache-Control", OPENAPI_CACHE_CONTROL]);
  else if (!isPublicFile(context.pathname)) headers.push(["Cache-Control", "no-store"]);
  return headers;
}

/**
 * Where a path with trailing slashes redirects to (308), or null. Next.js'
 * own redirect for this runs before proxy.ts and so carried no CSP; with
 * skipTrailingSlashRedirect proxy.ts answers it with every header. Leading
 * slashes and backslashes are collapsed so the target can never read as
 * another host (`//host/`, `/\host/`).
 */
export function withoutTrailingSlash(pathname: string): string | null {
  if (pathname === "/" || !pathname.endsWith("/")) return null;
  const stripped = pathname.replace(/\/+$/, "").replace(/^[/\\]+/, "/");
  return stripped === "" ? "/" : stripped;
}
