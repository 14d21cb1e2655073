import { encode } from "next-auth/jwt";
import { NextRequest } from "next/server";
// next/server exports only the type; the class is what next start hands proxy.ts.
import { NextFetchEvent } from "next/dist/server/web/spec-extension/fetch-event";
import proxy from "@/proxy";
import { STATIC_SECURITY_HEADERS } from "@/lib/security/headers";
import { sessionCookie } from "@/lib/security/cookies";
import { requireTestServices } from "@/tests/helpers/env";

// proxy.ts called in-process with real NextRequests, as next start calls it:
// a signed-in page, an API request, the sign-in redirect, the trailing-slash
// 308 and a cross-site refusal all carry the page policy, the static
// security headers and Cache-Control: no-store.

const APP = () => process.env.NEXTAUTH_URL ?? "http://127.0.0.1:3100";

beforeAll(() => requireTestServices());

async function run(path: string, init: { method?: string; headers?: Record<string, string> } = {}): Promise<Response> {
  const request = new NextRequest(`${APP()}${path}`, { method: init.method ?? "GET", headers: { host: new URL(APP()).host, ...init.headers } });
  const response = await proxy(request, new NextFetchEvent({ request, page: "/", context: undefined }));
  if (!response) throw new Error(`proxy.ts answered nothing for ${path}`);
  return response;
}

function expectSecurityHeaders(response: Response, where: string): void {
  const got = (name: string) => response.headers.get(name);
  expect({ where, csp: got("content-security-policy") }).toEqual({ where, csp: expect.stringMatching(/script-src 'self' 'nonce-[^']+' 'strict-dynamic'/) });
  for (const { key, value } of STATIC_SECURITY_HEADERS) expect({ where, [key]: got(key) }).toEqual({ where, [key]: value });
  expect({ where, cacheControl: got("cache-control") }).toEqual({ where, cacheControl: "no-store" });
}

async function signedInCookie(): Promise<string> {
  const token = await encode({ token: { sub: "1", email: "proxy-test@example.org", name: "Proxy Test" }, secret: process.env.NEXTAUTH_SECRET ?? "" });
  return `${sessionCookie(APP()).name}=${token}`;
}

describe("proxy.ts headers", () => {
  it("a signed-in workspace page passes on with every header, no-store included", async () => {
    const response = await run("/w/veldmark/desk", { headers: { cookie: await signedInCookie() } });
    expect(response.headers.get("x-middleware-next")).toBe("1");
    expectSecurityHeaders(response, "signed-in page");
  });

  it("an API request passes on with every header, no-store included", async () => {
    const response = await run("/api/w/veldmark/catalogue");
    expect(response.headers.get("x-middleware-next")).toBe("1");
    expectSecurityHeaders(response, "API request");
  });

  it("a signed-out visitor's redirect to sign-in carries every header", async () => {
    const response = await run("/w/veldmark/desk");
    expect(response.status).toBe(307);
    expect(response.headers.get("location")).toMatch(/\/sign-in\?callbackUrl=/);
    expectSecurityHeaders(response, "sign-in redirect");
  });

  it("the trailing-slash 308 carries every header and stays on this origin", async () => {
    const response = await run("/w/veldmark/desk/?run=3");
    expect(response.status).toBe(308);
    // Absolute on the request's own origin (NextRequest names 127.0.0.1 "localhost"): Next's adapter
    // throws on a bare path and turns a same-origin URL into the path-only Location the browser
    // gets (checked against the running app in tests/browser/security-headers).
    const location = new URL(response.headers.get("location") ?? "");
    expect(`${location.pathname}${location.search}`).toBe("/w/veldmark/desk?run=3");
    expect(location.port).toBe(new URL(APP()).port);
    expect(["localhost", "127.0.0.1"]).toContain(location.hostname);
    expectSecurityHeaders(response, "trailing-slash redirect");
    for (const sneaky of ["//evil.example/", "/%5Cevil.example/", "///evil.example//"]) {
      const location = (await run(sneaky)).headers.get("location") ?? "";
      const url = new URL(location, APP());
      expect({ sneaky, host: url.hostname, port: url.port, path: url.pathname }).toEqual({
        sneaky,
        host: expect.stringMatching(/^(localhost|127\.0\.0\.1)$/),
        port: new URL(APP()).port,
        path: expect.stringMatching(/^\/[^/\\]/),
      });
    }
  });

  it("a cross-site refusal (403) carries every header", async () => {
    const response = await run("/api/w/veldmark/invitations", { method: "POST", headers: { origin: "https://attacker.example" } });
    expect(response.status).toBe(403);
    expectSecurityHeaders(response, "cross-site refusal");
  });
});
