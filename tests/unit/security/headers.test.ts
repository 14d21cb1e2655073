import { HSTS, isPublicFile, OPENAPI_CACHE_CONTROL, OPENAPI_PATH, securityHeaders, STATIC_SECURITY_HEADERS, withoutTrailingSlash } from "@/lib/security/headers";
import nextConfig from "@/next.config.mjs";

const CSP = "default-src 'self'; script-src 'self' 'nonce-AAAAAAAAAAAAAAAAAAAAAA==' 'strict-dynamic'";

function asMap(headers: [string, string][]): Map<string, string> {
  return new Map(headers.map(([k, v]) => [k.toLowerCase(), v]));
}

describe("headers of proxy.ts answers", () => {
  it.each(["/api/w/veldmark/catalogue", "/api/auth/session", "/api/digests/unsubscribe", "/w/veldmark/desk", "/w", "/invite/abc_DEF-123", "/sign-in", "/", "/account/password"])(
    "%s: no-store, the CSP and every static security header",
    (pathname) => {
      const h = asMap(securityHeaders({ pathname, csp: CSP, https: false }));
      expect(h.get("cache-control")).toBe("no-store");
      expect(h.get("content-security-policy")).toBe(CSP);
      for (const { key, value } of STATIC_SECURITY_HEADERS) expect(h.get(key.toLowerCase())).toBe(value);
      expect(h.has("strict-transport-security")).toBe(false);
    },
  );

  it("lets files from public/ be cached, but never an API path that looks like a file", () => {
    expect(isPublicFile("/examples/veldmark-panel.csv")).toBe(true);
    expect(asMap(securityHeaders({ pathname: "/examples/veldmark-panel.csv", csp: CSP, https: false })).has("cache-control")).toBe(false);
    expect(isPublicFile("/api/w/x/catalogue/export.csv")).toBe(false);
    expect(isPublicFile("/w/veldmark/desk")).toBe(false);
  });

  it("lets the public OpenAPI document be cached, and only that API path", () => {
    expect(asMap(securityHeaders({ pathname: OPENAPI_PATH, csp: CSP, https: false })).get("cache-control")).toBe(OPENAPI_CACHE_CONTROL);
    expect(asMap(securityHeaders({ pathname: "/api/openapi.json/x", csp: CSP, https: false })).get("cache-control")).toBe("no-store");
    expect(asMap(securityHeaders({ pathname: "/api/w/x/openapi.json", csp: CSP, https: false })).get("cache-control")).toBe("no-store");
  });

  it("adds Strict-Transport-Security only when the app is served over https", () => {
    expect(asMap(securityHeaders({ pathname: "/w", csp: CSP, https: true })).get("strict-transport-security")).toBe(HSTS);
  });

  it("is the same static list next.config.mjs gives static files", async () => {
    const rules = (await nextConfig.headers?.()) ?? [];
    expect(rules.find((r) => r.source === "/:path*")?.headers).toEqual([...STATIC_SECURITY_HEADERS]);
    expect(nextConfig.skipTrailingSlashRedirect).toBe(true);
  });
});

describe("the trailing-slash redirect", () => {
  it.each([
    ["/w/veldmark/desk/", "/w/veldmark/desk"],
    ["/w/veldmark///", "/w/veldmark"],
    ["//evil.example/", "/evil.example"],
    ["/\\evil.example/", "/evil.example"],
    ["///", "/"],
  ])("%s → %s, never another host", (from, to) => {
    expect(withoutTrailingSlash(from)).toBe(to);
  });

  it("leaves paths without a trailing slash, and the root, alone", () => {
    expect(withoutTrailingSlash("/")).toBeNull();
    expect(withoutTrailingSlash("/w/veldmark")).toBeNull();
  });
});
