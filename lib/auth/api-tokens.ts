import { createHash, randomBytes, randomUUID, timingSafeEqual } from "node:crypto";
import { models } from "@/lib/models";
import { audit } from "@/lib/security/audit";
import { API_TOKEN_PREFIX, parseApiToken } from "./api-token-format";
import type { Role } from "./roles";

// Personal API tokens (docs/api-access.md). A token reads
// `tsr_<id>_<secret>`: the id (32 hex digits, the row's random UUID) finds
// the row, the secret (32 random bytes, base64url) proves it. Only the
// secret's SHA-256 is stored: with 256 bits of entropy there is nothing to
// brute-force, so a fast hash is right (unlike passwords).

/** How many distinct addresses a token remembers for "used from a new address". */
export const SEEN_ADDRESSES_KEPT = 50;
/** A use refreshes last use at most this often unless the address is new (one write per minute, not per request). */
const LAST_USE_RESOLUTION_MS = 60_000;

export function hashSecret(secret: string): string {
  return createHash("sha256").update(secret, "utf8").digest("hex");
}

/** A new token: its row id, the secret's hash to store, and the whole token to show once. */
export function mintApiToken(): { id: string; secretHash: string; token: string } {
  const id = randomUUID();
  const secret = randomBytes(32).toString("base64url");
  return { id, secretHash: hashSecret(secret), token: `${API_TOKEN_PREFIX}${id.replaceAll("-", "")}_${secret}` };
}

/** Constant-time comparison of a presented secret against a stored hash. */
export function secretMatches(secret: string, storedHash: string): boolean {
  const a = Buffer.from(hashSecret(secret), "hex");
  const b = Buffer.from(storedHash, "hex");
  return a.length === b.length && timingSafeEqual(a, b);
}

/** What a valid token stands for: its owner in its one workspace, with at most its role. */
export type TokenGrant = { tokenId: string; userId: number; workspaceId: number; role: Role };

/**
 * The grant of a presented token, or null when it is malformed, unknown,
 * revoked, expired or its secret does not match (all alike to the caller).
 * Records the use; a use from an address the token has not been used from
 * before is audited.
 */
export async function verifyApiToken(token: string, address: string, now: Date = new Date()): Promise<TokenGrant | null> {
  const parsed = parseApiToken(token);
  if (!parsed) return null;
  const { ApiToken, User } = models();
  const row = await ApiToken.findByPk(parsed.id);
  if (!row || !secretMatches(parsed.secret, row.secretHash)) return null;
  if (row.revokedAt !== null || row.expiresAt.getTime() <= now.getTime()) return null;
  const seen = row.seenAddresses ?? [];
  const newAddress = !seen.includes(address);
  if (newAddress || row.lastAddress !== address || !row.lastUsedAt || now.getTime() - row.lastUsedAt.getTime() >= LAST_USE_RESOLUTION_MS) {
    const seenAddresses = newAddress ? [...seen, address].slice(-SEEN_ADDRESSES_KEPT) : seen;
    await ApiToken.update({ lastUsedAt: now, lastAddress: address, seenAddresses }, { where: { id: row.id } });
  }
  if (newAddress) {
    const owner = await User.findByPk(row.userId, { attributes: ["email"] });
    await audit({
      workspaceId: row.workspaceId,
      actorId: row.userId,
      actorEmail: owner?.email ?? null,
      action: "api-token.used-from-new-address",
      target: `API token "${row.name}"`,
      detail: { tokenId: row.id, address },
    });
  }
  return { tokenId: row.id, userId: row.userId, workspaceId: row.workspaceId, role: row.role };
}
