import { createHash } from "node:crypto";
import { API_TOKEN_EXPIRY_DAYS, bearerOf, cappedRole, grantableRoles, parseApiToken, roleWithin, tokenExpiry } from "@/lib/auth/api-token-format";
import { hashSecret, mintApiToken, secretMatches } from "@/lib/auth/api-tokens";
import { ROLES, type Role } from "@/lib/auth/roles";

describe("personal API tokens: minting, hashing and parsing", () => {
  it("mints tsr_<32 hex id>_<43 base64url secret> whose id is the row's UUID and whose hash is the secret's SHA-256", () => {
    const minted = mintApiToken();
    expect(minted.token).toMatch(/^tsr_[0-9a-f]{32}_[A-Za-z0-9_-]{43}$/);
    const parsed = parseApiToken(minted.token);
    expect(parsed?.id).toBe(minted.id);
    expect(parsed?.secret).toHaveLength(43);
    expect(minted.secretHash).toBe(createHash("sha256").update(parsed!.secret, "utf8").digest("hex"));
    expect(hashSecret(parsed!.secret)).toBe(minted.secretHash);
    // The stored hash is not the token and does not contain the secret.
    expect(minted.token).not.toContain(minted.secretHash);
  });

  it("mints a different id and secret every time", () => {
    const tokens = new Set(Array.from({ length: 50 }, () => mintApiToken().token));
    const ids = new Set([...tokens].map((t) => parseApiToken(t)?.id));
    expect(tokens.size).toBe(50);
    expect(ids.size).toBe(50);
  });

  it("matches a secret against its hash only, in constant time", () => {
    const minted = mintApiToken();
    const { secret } = parseApiToken(minted.token)!;
    expect(secretMatches(secret, minted.secretHash)).toBe(true);
    expect(secretMatches(`${secret.slice(0, -1)}${secret.endsWith("A") ? "B" : "A"}`, minted.secretHash)).toBe(false);
    expect(secretMatches(secret, "00")).toBe(false);
  });

  it.each([
    ["", "empty"],
    ["tsr_", "prefix only"],
    ["tsr_0123456789abcdef0123456789abcdef", "no secret"],
    ["tsr_0123456789ABCDEF0123456789ABCDEF_aaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaa", "upper-case id"],
    ["tsr_0123456789abcdef0123456789abcdef_aaaa", "short secret"],
    ["tsr_0123456789abcdef0123456789abcdef_aaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaa=", "padding"],
    ["xyz_0123456789abcdef0123456789abcdef_aaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaa", "another prefix"],
    [" tsr_0123456789abcdef0123456789abcdef_aaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaa", "leading space"],
  ])("refuses %j (%s)", (token) => {
    expect(parseApiToken(token)).toBeNull();
  });

  it("reads Bearer credentials from the Authorization header, any case, and leaves other schemes to the session", () => {
    expect(bearerOf(null)).toBeNull();
    expect(bearerOf("")).toBeNull();
    expect(bearerOf("Bearer tsr_abc")).toEqual({ scheme: "bearer", token: "tsr_abc" });
    expect(bearerOf("bearer   tsr_abc  ")).toEqual({ scheme: "bearer", token: "tsr_abc" });
    expect(bearerOf("BEARER")).toEqual({ scheme: "bearer", token: "" });
    expect(bearerOf("Bearer a b")).toEqual({ scheme: "bearer", token: "a b" });
    expect(bearerOf("Basic dXNlcjpwYXNz")).toEqual({ scheme: "other" });
    expect(bearerOf("Bearertsr_abc")).toEqual({ scheme: "other" });
  });
});

describe("a token's role", () => {
  const RANK: Record<Role, number> = { subscriber: 0, economist: 1, steward: 2, manager: 3 };

  it("is capped by its owner's current role: the lower of the two, for every pair", () => {
    for (const token of ROLES) {
      for (const owner of ROLES) {
        expect(cappedRole(token, owner)).toBe(RANK[token] <= RANK[owner] ? token : owner);
      }
    }
    expect(cappedRole("manager", "economist")).toBe("economist");
    expect(cappedRole("subscriber", "manager")).toBe("subscriber");
  });

  it("may be given only up to the owner's role", () => {
    expect(grantableRoles("manager")).toEqual(["manager", "steward", "economist", "subscriber"]);
    expect(grantableRoles("economist")).toEqual(["economist", "subscriber"]);
    expect(grantableRoles("subscriber")).toEqual(["subscriber"]);
    expect(roleWithin("steward", "economist")).toBe(false);
    expect(roleWithin("economist", "economist")).toBe(true);
  });
});

describe("a token's expiry", () => {
  it("is a whole number of days from creation, one of 7, 30, 90 or 365", () => {
    expect(API_TOKEN_EXPIRY_DAYS).toEqual([7, 30, 90, 365]);
    const from = new Date("2026-12-05T08:00:00Z");
    expect(tokenExpiry(30, from).toISOString()).toBe("2027-01-04T08:00:00.000Z");
    expect(tokenExpiry(7, from).toISOString()).toBe("2026-12-12T08:00:00.000Z");
  });
});
