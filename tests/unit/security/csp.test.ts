import { contentSecurityPolicy, newNonce, uploadOrigin } from "@/lib/security/csp";

function directives(policy: string): Map<string, string[]> {
  return new Map(
    policy.split(";").map((part) => {
      const [name, ...sources] = part.trim().split(/\s+/);
      return [name, sources] as [string, string[]];
    }),
  );
}

const base = { nonce: "AAAAAAAAAAAAAAAAAAAAAA==", development: false, uploadOrigin: "http://127.0.0.1:4569", https: false };

describe("Content-Security-Policy", () => {
  it("allows scripts only with this response's nonce (strict-dynamic), never inline or eval in production", () => {
    const d = directives(contentSecurityPolicy(base));
    expect(d.get("script-src")).toEqual(["'self'", "'nonce-AAAAAAAAAAAAAAAAAAAAAA=='", "'strict-dynamic'"]);
    expect(d.get("script-src")).not.toContain("'unsafe-inline'");
    expect(d.get("script-src")).not.toContain("'unsafe-eval'");
  });

  it("adds 'unsafe-eval' and the hot-reload websocket only for next dev", () => {
    const d = directives(contentSecurityPolicy({ ...base, development: true }));
    expect(d.get("script-src")).toContain("'unsafe-eval'");
    expect(d.get("connect-src")).toContain("ws:");
  });

  it("forbids framing, plugins and <base>, and lets the browser upload to the S3 endpoint", () => {
    const d = directives(contentSecurityPolicy(base));
    expect(d.get("frame-ancestors")).toEqual(["'none'"]);
    expect(d.get("object-src")).toEqual(["'none'"]);
    expect(d.get("base-uri")).toEqual(["'none'"]);
    expect(d.get("form-action")).toEqual(["'self'"]);
    expect(d.get("connect-src")).toEqual(["'self'", "http://127.0.0.1:4569"]);
    expect(d.has("upgrade-insecure-requests")).toBe(false);
  });

  it("upgrades insecure requests only behind https (on plain http it would break the http S3 endpoint)", () => {
    expect(directives(contentSecurityPolicy({ ...base, https: true })).has("upgrade-insecure-requests")).toBe(true);
  });

  it("refuses a nonce that is too short or could break out of the header", () => {
    expect(() => contentSecurityPolicy({ ...base, nonce: "abc" })).toThrow(/nonce/);
    expect(() => contentSecurityPolicy({ ...base, nonce: "AAAAAAAAAAAAAAAAAAAA'; script-src *" })).toThrow(/nonce/);
  });

  it("makes a fresh 16-byte nonce each time", () => {
    const a = newNonce();
    const b = newNonce();
    expect(a).not.toBe(b);
    expect(Buffer.from(a, "base64")).toHaveLength(16);
  });

  it("names the upload origin for path-style and virtual-hosted S3", () => {
    expect(uploadOrigin("http://127.0.0.1:4569", "tessera-uploads", true)).toBe("http://127.0.0.1:4569");
    expect(uploadOrigin("https://s3.eu-central-1.amazonaws.com/", "tessera-uploads", false)).toBe("https://tessera-uploads.s3.eu-central-1.amazonaws.com");
    expect(uploadOrigin("not a url", "b", true)).toBeNull();
    expect(uploadOrigin(undefined, "b", true)).toBeNull();
  });
});
