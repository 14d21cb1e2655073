import { createHash, randomBytes, timingSafeEqual } from "node:crypto";

// Invitation tokens: 32 random bytes, sent once by e-mail. Only the SHA-256
// hash is stored, so the database alone cannot be used to accept an invitation.
// A fast hash is right here (unlike passwords): the token has 256 bits of
// entropy, so there is nothing to brute-force.

export const INVITATION_TTL_DAYS = 7;

export function hashToken(token: string): string {
  return createHash("sha256").update(token, "utf8").digest("hex");
}

export function createToken(): { token: string; hash: string } {
  const token = randomBytes(32).toString("base64url");
  return { token, hash: hashToken(token) };
}

/** Constant-time comparison of a presented token against a stored hash. */
export function tokenMatches(token: string, storedHash: string): boolean {
  const a = Buffer.from(hashToken(token), "hex");
  const b = Buffer.from(storedHash, "hex");
  return a.length === b.length && timingSafeEqual(a, b);
}

/** A token as produced by createToken: 43 base64url characters. */
export function looksLikeToken(value: string): boolean {
  return /^[A-Za-z0-9_-]{43}$/.test(value);
}

export function invitationExpiry(from: Date = new Date()): Date {
  return new Date(from.getTime() + INVITATION_TTL_DAYS * 24 * 60 * 60 * 1000);
}
