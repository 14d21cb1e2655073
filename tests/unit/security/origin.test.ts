import { carriesSessionCookie, crossSiteRefusal, type OriginCheckInput } from "@/lib/security/origin";

const APP = "http://127.0.0.1:3000";
const base: OriginCheckInput = { method: "POST", pathname: "/api/w/veldmark/runs", origin: null, secFetchSite: null, host: "127.0.0.1:3000", appUrl: APP };
const check = (overrides: Partial<OriginCheckInput>) => crossSiteRefusal({ ...base, ...overrides });

describe("cross-site refusal of API requests that change data", () => {
  it.each(["POST", "PUT", "PATCH", "DELETE"])("refuses a %s from another site's page, naming the origin", (method) => {
    expect(check({ method, origin: "https://attacker.example" })).toMatch(/came from another site \(Origin: https:\/\/attacker\.example\)/);
  });

  it("refuses by Sec-Fetch-Site alone (cross-site and same-site), even when the Origin header is missing", () => {
    expect(check({ secFetchSite: "cross-site" })).toMatch(/Sec-Fetch-Site: cross-site/);
    expect(check({ secFetchSite: "same-site" })).toMatch(/Sec-Fetch-Site: same-site/);
  });

  it("refuses an opaque origin (a sandboxed frame or a data: page sends Origin: null)", () => {
    expect(check({ origin: "null" })).toMatch(/Origin: null/);
  });

  it("lets through the app's own pages: same origin, the public address behind a proxy, or the Host the browser used", () => {
    expect(check({ origin: APP, secFetchSite: "same-origin" })).toBeNull();
    expect(check({ origin: "https://tessera.example.org", host: "10.0.0.5:3000", appUrl: "https://tessera.example.org" })).toBeNull();
    expect(check({ origin: "http://localhost:3000", host: "localhost:3000" })).toBeNull();
    expect(check({ secFetchSite: "none" })).toBeNull();
  });

  it("lets through a request that states no origin at all (a script with its own session, not a page)", () => {
    expect(check({})).toBeNull();
  });

  it("leaves reads, pages and the routes that take cross-site POSTs by design alone", () => {
    for (const method of ["GET", "HEAD", "OPTIONS", "get"]) expect(check({ method, origin: "https://attacker.example" })).toBeNull();
    expect(check({ pathname: "/w/veldmark/desk", origin: "https://attacker.example" })).toBeNull();
    expect(check({ pathname: "/api/auth/callback/credentials", origin: "https://attacker.example" })).toBeNull();
    expect(check({ pathname: "/api/digests/unsubscribe", origin: "https://mail.example" })).toBeNull();
    // Only that route: a look-alike path is checked.
    expect(check({ pathname: "/api/digests/unsubscribe-all", origin: "https://attacker.example" })).not.toBeNull();
    expect(check({ pathname: "/api/invitations/accept", origin: "https://attacker.example" })).not.toBeNull();
  });

  it("lets through a request with an API token (Bearer) and no session cookie, whatever its origin", () => {
    const bearer = "Bearer tsr_0123456789abcdef0123456789abcdef_aaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaa";
    expect(check({ origin: "https://scripts.example", authorization: bearer })).toBeNull();
    expect(check({ secFetchSite: "cross-site", authorization: bearer, cookie: "theme=dark" })).toBeNull();
  });

  it("checks a Bearer request that also carries a session cookie as usual, and ignores other schemes", () => {
    const bearer = "Bearer tsr_x";
    expect(check({ origin: "https://attacker.example", authorization: bearer, cookie: "next-auth.session-token=abc" })).toMatch(/another site/);
    expect(check({ origin: "https://attacker.example", authorization: bearer, cookie: "a=1; __Secure-next-auth.session-token.0=abc" })).toMatch(/another site/);
    expect(check({ origin: "https://attacker.example", authorization: "Basic dXNlcjpwYXNz" })).toMatch(/another site/);
  });

  it("recognises next-auth's session cookie under both names and in chunks, and nothing else", () => {
    expect(carriesSessionCookie("next-auth.session-token=x")).toBe(true);
    expect(carriesSessionCookie("a=b; __Secure-next-auth.session-token=x")).toBe(true);
    expect(carriesSessionCookie("next-auth.session-token.1=x")).toBe(true);
    expect(carriesSessionCookie("next-auth.csrf-token=x; next-auth.callback-url=y")).toBe(false);
    expect(carriesSessionCookie(null)).toBe(false);
  });
});
