import { clientIp } from "@/lib/auth/client-ip";
import { buildAuthOptions } from "@/lib/auth/options";

describe("session cookie flags", () => {
  it("behind https: Secure, __Secure- prefixed, HttpOnly, SameSite=Lax, and next-auth's other cookies secure too", () => {
    const options = buildAuthOptions("https://tessera.example.org");
    expect(options.useSecureCookies).toBe(true);
    const cookie = options.cookies?.sessionToken;
    expect(cookie?.name).toBe("__Secure-next-auth.session-token");
    expect(cookie?.options).toEqual(expect.objectContaining({ httpOnly: true, sameSite: "lax", secure: true, path: "/" }));
  });

  it("on plain http (local use): HttpOnly and SameSite=Lax, not Secure (a browser would drop it)", () => {
    const options = buildAuthOptions("http://127.0.0.1:3000");
    expect(options.useSecureCookies).toBe(false);
    const cookie = options.cookies?.sessionToken;
    expect(cookie?.name).toBe("next-auth.session-token");
    expect(cookie?.options).toEqual(expect.objectContaining({ httpOnly: true, sameSite: "lax", secure: false }));
  });
});

describe("client address for the sign-in throttle", () => {
  it("takes the address the nearest proxy (or next start) vouched for, not what the client wrote first", () => {
    expect(clientIp(new Headers({ "x-forwarded-for": "203.0.113.9, 198.51.100.4" }))).toBe("198.51.100.4");
    expect(clientIp({ "x-forwarded-for": "127.0.0.1" })).toBe("127.0.0.1");
    expect(clientIp({ "x-forwarded-for": ["203.0.113.9", "198.51.100.4"] })).toBe("198.51.100.4");
    expect(clientIp({ "x-real-ip": "198.51.100.7" })).toBe("198.51.100.7");
    expect(clientIp(undefined)).toBe("unknown");
  });
});
