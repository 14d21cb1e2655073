import { NextResponse, type NextFetchEvent, type NextRequest } from "next/server";
import { withAuth, type NextRequestWithAuth } from "next-auth/middleware";
import { env } from "@/lib/config/env";
import { sessionCookie, isHttpsUrl } from "@/lib/security/cookies";
import { contentSecurityPolicy, newNonce, uploadOrigin } from "@/lib/security/csp";
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
//    refused with 403 before any handler runs (lib/security/origin.ts).
// The other security headers (nosniff, frame options, referrer and permissions
// policies) are static and come from next.config.mjs, for static files too.

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

function withSecurityHeaders<R extends Response>(response: R, csp: string): R {
  response.headers.set("content-security-policy", csp);
  if (isHttpsUrl(env().NEXTAUTH_URL)) response.headers.set("strict-transport-security", "max-age=31536000; includeSubDomains");
  return response;
}

export default async function proxy(request: NextRequest, event: NextFetchEvent) {
  const nonce = newNonce();
  const csp = policy(nonce);
  const refusal = crossSiteRefusal({
    method: request.method,
    pathname: request.nextUrl.pathname,
    origin: request.headers.get("origin"),
    secFetchSite: request.headers.get("sec-fetch-site"),
    host: request.headers.get("host"),
    appUrl: env().NEXTAUTH_URL,
  });
  if (refusal) return withSecurityHeaders(NextResponse.json({ error: refusal, field: null }, { status: 403 }), csp);
  if (isWorkspacePath(request.nextUrl.pathname)) {
    // withAuth answers a redirect when there is no valid session, nothing otherwise.
    const denied = await requireSession(request as NextRequestWithAuth, event);
    if (denied) return withSecurityHeaders(denied, csp);
  }
  const requestHeaders = new Headers(request.headers);
  requestHeaders.set("x-nonce", nonce);
  requestHeaders.set("content-security-policy", csp);
  return withSecurityHeaders(NextResponse.next({ request: { headers: requestHeaders } }), csp);
}

export const config = {
  // Everything but build output served from disk: those files get their
  // headers from next.config.mjs and need no nonce.
  matcher: ["/((?!_next/static|_next/image|favicon.ico).*)"],
};
