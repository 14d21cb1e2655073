/**
 * Cross-site request refusal for API requests that change data. The session
 * cookie is SameSite=Lax, which already keeps it off cross-site POSTs in
 * current browsers; this is the second, independent check (common practice,
 * as in the OWASP cross-site request forgery prevention guidance: verify the
 * source origin with standard headers). Next.js checks the origin of server
 * actions itself; this covers the route handlers under /api.
 *
 * A browser states where a request comes from: `Sec-Fetch-Site` in current
 * browsers, and `Origin` on every cross-origin POST, PUT, PATCH and DELETE.
 * A request that carries neither is not from a browser page (a script or curl
 * with its own session cookie) and cannot be forged by another site, so it
 * passes.
 *
 * A request that carries `Authorization: Bearer …` (a personal API token) and
 * no session cookie passes whatever its origin: a page on another site cannot
 * make a browser add that header on its own, and the token is its only
 * credential (the guard checks it). With a session cookie it is checked as
 * usual, so a token cannot carry a forged cookie-authenticated request past.
 */

const SAFE_METHODS = new Set(["GET", "HEAD", "OPTIONS"]);

/**
 * Routes that take cross-site POSTs by design:
 * - next-auth's own endpoints check their own CSRF token;
 * - one-click unsubscribe (RFC 8058) is posted by mail clients, and the signed
 *   token in its link is its only credential, not the session cookie.
 */
const EXEMPT_ROUTES = ["/api/auth", "/api/digests/unsubscribe"];

function isExempt(pathname: string): boolean {
  return EXEMPT_ROUTES.some((route) => pathname === route || pathname.startsWith(`${route}/`));
}

export interface OriginCheckInput {
  method: string;
  pathname: string;
  /** The request's `Origin` header, or null. */
  origin: string | null;
  /** The request's `Sec-Fetch-Site` header, or null. */
  secFetchSite: string | null;
  /** The `Host` the request was sent to (what the browser put in the address), or null. */
  host: string | null;
  /** The app's public address (NEXTAUTH_URL). */
  appUrl: string;
  /** The request's `Authorization` header, or null. */
  authorization?: string | null;
  /** The request's `Cookie` header, or null. */
  cookie?: string | null;
}

const SESSION_COOKIE_NAME = /^(__Secure-)?next-auth\.session-token(\.\d+)?$/;

/** True when the Cookie header holds next-auth's session cookie (or one of its chunks), under either name. */
export function carriesSessionCookie(cookie: string | null | undefined): boolean {
  if (!cookie) return false;
  return cookie.split(";").some((pair) => SESSION_COOKIE_NAME.test(pair.split("=")[0].trim()));
}

/** True for a programmatic request: a Bearer token and no session cookie. */
export function isTokenRequest(input: Pick<OriginCheckInput, "authorization" | "cookie">): boolean {
  return /^\s*bearer(\s|$)/i.test(input.authorization ?? "") && !carriesSessionCookie(input.cookie);
}

/** Null when the request may proceed; otherwise the sentence to answer with a 403. */
export function crossSiteRefusal(input: OriginCheckInput): string | null {
  if (SAFE_METHODS.has(input.method.toUpperCase())) return null;
  if (!input.pathname.startsWith("/api/")) return null;
  if (isExempt(input.pathname)) return null;
  if (isTokenRequest(input)) return null;

  const site = input.secFetchSite?.toLowerCase() ?? null;
  if (site !== null && site !== "same-origin" && site !== "none") {
    return `Tessera refused this request because it came from another site (Sec-Fetch-Site: ${site}). Use Tessera from its own address.`;
  }
  if (input.origin === null) return null;
  if (sameOrigin(input.origin, input.appUrl) || (input.host !== null && hostOf(input.origin) === input.host.toLowerCase())) return null;
  return `Tessera refused this request because it came from another site (Origin: ${input.origin.slice(0, 200)}). Use Tessera from its own address.`;
}

function hostOf(url: string): string | null {
  try {
    return new URL(url).host.toLowerCase();
  } catch {
    return null;
  }
}

function sameOrigin(a: string, b: string): boolean {
  try {
    return new URL(a).origin === new URL(b).origin;
  } catch {
    return false;
  }
}
