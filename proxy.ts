import { NextResponse, type NextFetchEvent, type NextRequest } from "next/server";
import { withAuth, type NextRequestWithAuth } from "next-auth/middleware";
import { env } from "@/lib/config/env";
import { sessionCookie, isHttpsUrl } from "@/lib/security/cookies";
import { contentSecurityPolicy, newNonce, uploadOrigin } from "@/lib/security/csp";
import { movedApiPath } from "@/lib/http/moved-paths";
import { securityHeaders, withoutTrailingSlash } from "@/lib/security/headers";
import { crossSiteRefusal } from "@/lib/security/origin";

// Three jobs, on every request but static files:
// 1. A Content-Security-Policy with a fresh script nonce. Next.js reads the
//    nonce from the request's CSP header while rendering and stamps it on its
//    scripts, so every page renders dynamically (none is prerendered at build;
//    a prerendered page would carry scripts without this response's nonce).
// 2. Only the cheap check for workspace pages: no session cookie → the sign-in
//    page. Whether the visitor may see a workspace is decided by
//    lib/auth/guard.ts on the server; API routes answer 401 themselves.
// 3. API requests that change data and come from another site's page are
//    refused with 403 before any handler runs (lib/security/origin.ts);
//    requests with an API token (Bearer) and no session cookie are exempt.
// Every answer it gives, redirects and refusals included, carries the CSP, the
// static security headers (also set by next.config.mjs, which alone reaches
// static files) and Cache-Control: no-store (lib/security/headers.ts). It also
// answers the trailing-slash 308 itself (skipTrailingSlashRedirect), so that
// redirect carries them too. The 308 from an API path that moved to where it
// answers now (lib/http/moved-paths.ts) is answered here for the same reason.

const requireSession = withAuth({
  pages: { signIn: "/sign-in" },
  cookies: { sessionToken: sessionCookie(process.env.NEXTAUTH_URL ?? "") },
});

function isWorkspacePath(pathname: string): boolean {
  return pathname === "/w" || pathname.startsWith("/w/");
}

function policy(nonce: string): string {
  const e = env();
  return contentSecurityPolicy({
    nonce,
    development: process.env.NODE_ENV === "development",
    uploadOrigin: uploadOrigin(e.S3_ENDPOINT, e.S3_BUCKET, e.S3_FORCE_PATH_STYLE),
    https: isHttpsUrl(e.NEXTAUTH_URL),
  });
}

function withSecurityHeaders<R extends Response>(response: R, csp: string, pathname: string): R {
  for (const [name, value] of securityHeaders({ pathname, csp, https: isHttpsUrl(env().NEXTAUTH_URL) })) response.headers.set(name, value);
  return response;
}

export default async function proxy(request: NextRequest, event: NextFetchEvent) {
  const nonce = newNonce();
  const csp = policy(nonce);
  const { pathname } = request.nextUrl;
  const slashless = withoutTrailingSlash(pathname);
  if (slashless) {
    // Next's proxy adapter parses every Location as an absolute URL (a bare path throws "Invalid
    // URL", a 500) and then turns a same-origin one back into a path-only Location, so the browser
    // keeps this origin as it sees it (127.0.0.1 stays 127.0.0.1, whose cookies these are). The
    // request's own URL is the base the adapter compares with; NextURL (request.nextUrl) is not
    // used because it would put the trailing slash back.
    const location = new URL(`${slashless}${request.nextUrl.search}`, request.url).toString();
    return withSecurityHeaders(new NextResponse(null, { status: 308, headers: { location } }), csp, pathname);
  }
  const refusal = crossSiteRefusal({
    method: request.method,
    pathname: request.nextUrl.pathname,
    origin: request.headers.get("origin"),
    secFetchSite: request.headers.get("sec-fetch-site"),
    host: request.headers.get("host"),
    appUrl: env().NEXTAUTH_URL,
    authorization: request.headers.get("authorization"),
    cookie: request.headers.get("cookie"),
  });
  if (refusal) return withSecurityHeaders(NextResponse.json({ error: refusal, field: null }, { status: 403 }), csp, pathname);
  const moved = movedApiPath(request.nextUrl.pathname);
  if (moved) {
    // An API path that moved (lib/http/moved-paths.ts), answered after the cross-site check so a
    // refused request is never redirected: 308 keeps the method and body. The Location is absolute
    // on the request's own origin (Next's proxy adapter parses it as a URL and hands the browser a
    // path-only one when the origin is the request's).
    const location = new URL(`${moved}${request.nextUrl.search}`, request.url).toString();
    return withSecurityHeaders(new NextResponse(null, { status: 308, headers: { location } }), csp, pathname);
  }
  if (isWorkspacePath(request.nextUrl.pathname)) {
    // withAuth answers a redirect when there is no valid session, nothing otherwise.
    const denied = await requireSession(request as NextRequestWithAuth, event);
    if (denied) return withSecurityHeaders(denied, csp, pathname);
  }
  const requestHeaders = new Headers(request.headers);
  requestHeaders.set("x-nonce", nonce);
  requestHeaders.set("content-security-policy", csp);
  return withSecurityHeaders(NextResponse.next({ request: { headers: requestHeaders } }), csp, pathname);
}

export const config = {
  // Everything but build output served from disk: those files get their
  // headers from next.config.mjs and need no nonce.
  matcher: ["/((?!_next/static|_next/image|favicon.ico).*)"],
};
