import { createHash } from "node:crypto";
import { createToken, hashToken, invitationExpiry, looksLikeToken, tokenMatches, INVITATION_TTL_DAYS } from "@/lib/auth/tokens";

describe("invitation tokens", () => {
  it("stores a SHA-256 hex digest of the token, never the token", () => {
    const { token, hash } = createToken();
    expect(hash).toMatch(/^[0-9a-f]{64}$/);
    expect(hash).not.toContain(token);
    expect(hash).toBe(createHash("sha256").update(token).digest("hex"));
  });

  it("hashes a known value as SHA-256 does", () => {
    expect(hashToken("abc")).toBe("ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad");
  });

  it("makes 256-bit base64url tokens that differ every time", () => {
    const tokens = new Set(Array.from({ length: 200 }, () => createToken().token));
    expect(tokens.size).toBe(200);
    for (const t of tokens) {
      expect(looksLikeToken(t)).toBe(true);
      expect(Buffer.from(t, "base64url")).toHaveLength(32);
    }
  });

  it("matches a token only against its own hash", () => {
    const a = createToken();
    const b = createToken();
    expect(tokenMatches(a.token, a.hash)).toBe(true);
    expect(tokenMatches(a.token, b.hash)).toBe(false);
    expect(tokenMatches(a.token, "not-hex")).toBe(false);
  });

  it("refuses things that are not tokens before any database lookup", () => {
    for (const v of ["", "short", "x".repeat(44), "../../etc/passwd-padding-padding-padding-pad", "a b".repeat(15)]) {
      expect(looksLikeToken(v)).toBe(false);
    }
  });

  it("expires seven days after creation", () => {
    const from = new Date("2026-03-01T12:00:00Z");
    expect(INVITATION_TTL_DAYS).toBe(7);
    expect(invitationExpiry(from).toISOString()).toBe("2026-03-08T12:00:00.000Z");
  });
});
