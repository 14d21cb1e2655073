import { deviceCookieName, deviceSetCookie, issueDeviceCookie, readCookie, verifyDeviceCookie } from "@/lib/auth/device-cookie";

const SECRET = "unit-test-secret-unit-test-secret";
const EMAIL = "owner@tessera-test.invalid";

describe("device cookies (OWASP device-cookie protocol)", () => {
  it("accepts a cookie it issued for the same address, giving its nonce", () => {
    const cookie = issueDeviceCookie(EMAIL, SECRET);
    const nonce = verifyDeviceCookie(cookie, EMAIL, SECRET);
    expect(nonce).toMatch(/^[A-Za-z0-9_-]{22}$/);
    expect(cookie.startsWith(`${nonce}.`)).toBe(true);
  });

  it("issues a fresh nonce each time", () => {
    expect(issueDeviceCookie(EMAIL, SECRET)).not.toBe(issueDeviceCookie(EMAIL, SECRET));
  });

  it("refuses a cookie for another address, from another secret, or altered in any way", () => {
    const cookie = issueDeviceCookie(EMAIL, SECRET);
    const [nonce, mac] = cookie.split(".");
    expect(verifyDeviceCookie(cookie, "someone.else@tessera-test.invalid", SECRET)).toBeNull();
    expect(verifyDeviceCookie(cookie, EMAIL, `${SECRET}x`)).toBeNull();
    expect(verifyDeviceCookie(issueDeviceCookie(EMAIL, "an attacker's own secret"), EMAIL, SECRET)).toBeNull();
    const flip = (s: string) => (s[0] === "A" ? "B" : "A") + s.slice(1);
    expect(verifyDeviceCookie(`${flip(nonce)}.${mac}`, EMAIL, SECRET)).toBeNull();
    expect(verifyDeviceCookie(`${nonce}.${flip(mac)}`, EMAIL, SECRET)).toBeNull();
    expect(verifyDeviceCookie(`${cookie}.extra`, EMAIL, SECRET)).toBeNull();
    for (const junk of ["", ".", nonce, `${nonce}.`, `.${mac}`, "x".repeat(5000), null, undefined]) {
      expect(verifyDeviceCookie(junk, EMAIL, SECRET)).toBeNull();
    }
    expect(verifyDeviceCookie(cookie, EMAIL, undefined)).toBeNull();
    expect(() => issueDeviceCookie(EMAIL, undefined)).toThrow(/NEXTAUTH_SECRET/);
  });

  it("is HttpOnly, SameSite=Strict, sent only to /api/auth, and Secure with the __Secure- prefix behind https", () => {
    expect(deviceSetCookie("http://127.0.0.1:3000", "v")).toBe(`tessera.device=v; Path=/api/auth; Max-Age=${180 * 86400}; HttpOnly; SameSite=Strict`);
    const https = deviceSetCookie("https://tessera.example.org", "v");
    expect(https.startsWith("__Secure-tessera.device=v;")).toBe(true);
    expect(https).toMatch(/; Secure$/);
    expect(deviceCookieName("https://tessera.example.org")).toBe("__Secure-tessera.device");
  });

  it("reads one cookie out of a Cookie header", () => {
    expect(readCookie("a=1; tessera.device=abc.def; b=2", "tessera.device")).toBe("abc.def");
    expect(readCookie("xtessera.device=1", "tessera.device")).toBeNull();
    expect(readCookie(undefined, "tessera.device")).toBeNull();
    expect(readCookie(["a=1", "tessera.device=z"], "tessera.device")).toBe("z");
  });
});
