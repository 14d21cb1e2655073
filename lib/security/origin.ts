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
}

/** Null when the request may proceed; otherwise the sentence to answer with a 403. */
export function crossSiteRefusal(input: OriginCheckInput): string | null {
  if (SAFE_METHODS.has(input.method.toUpperCase())) return null;
  if (!input.pathname.startsWith("/api/")) return null;
  if (isExempt(input.pathname)) return null;

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
