import { signUnsubscribeToken, verifyUnsubscribeToken } from "@/lib/digests/token";
import { isoWeekKey, monthKey } from "@/lib/digests/service";

const secret = "unit-test-secret-0123456789";
const now = new Date("2026-12-01T10:00:00Z");

describe("unsubscribe tokens", () => {
  it("round-trips the subscription id and expiry", () => {
    const token = signUnsubscribeToken(42, { secret, now, ttlSeconds: 3600 });
    const check = verifyUnsubscribeToken(token, { secret, now });
    expect(check).toEqual({ ok: true, subscriptionId: 42, expiresAt: new Date("2026-12-01T11:00:00Z") });
  });

  it("rejects a token whose payload was changed to another subscription", () => {
    const token = signUnsubscribeToken(42, { secret, now });
    const [, signature] = token.split(".");
    const forgedPayload = Buffer.from(JSON.stringify({ s: 43, e: Math.floor(now.getTime() / 1000) + 3600 })).toString("base64url");
    expect(verifyUnsubscribeToken(`${forgedPayload}.${signature}`, { secret, now })).toMatchObject({ ok: false, reason: "tampered" });
  });

  it("rejects a token signed with another secret, and a damaged one", () => {
    const token = signUnsubscribeToken(42, { secret: "another-secret", now });
    expect(verifyUnsubscribeToken(token, { secret, now })).toMatchObject({ ok: false, reason: "tampered" });
    expect(verifyUnsubscribeToken("not-a-token", { secret, now })).toMatchObject({ ok: false, reason: "malformed" });
    expect(verifyUnsubscribeToken(undefined, { secret, now })).toMatchObject({ ok: false, reason: "malformed" });
    expect(verifyUnsubscribeToken(`${token}x`, { secret, now })).toMatchObject({ ok: false });
  });

  it("rejects an expired token with a message saying nothing changed", () => {
    const token = signUnsubscribeToken(42, { secret, now, ttlSeconds: 60 });
    expect(verifyUnsubscribeToken(token, { secret, now: new Date(now.getTime() + 59_000) })).toMatchObject({ ok: true });
    const late = verifyUnsubscribeToken(token, { secret, now: new Date(now.getTime() + 60_000) });
    expect(late).toMatchObject({ ok: false, reason: "expired" });
    expect(late.ok ? "" : late.message).toContain("nothing was changed");
  });

  it("refuses to sign a bad subscription id", () => {
    expect(() => signUnsubscribeToken(0, { secret })).toThrow(/positive integer/);
  });
});

describe("digest period keys", () => {
  it("names ISO weeks and months", () => {
    expect(isoWeekKey(new Date("2026-12-01T00:00:00Z"))).toBe("2026-W49");
    expect(isoWeekKey(new Date("2027-01-01T00:00:00Z"))).toBe("2026-W53");
    expect(monthKey(new Date("2026-12-31T23:00:00Z"))).toBe("2026-12");
  });
});
