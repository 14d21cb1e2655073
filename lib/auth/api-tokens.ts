import { createHash, randomBytes, randomUUID, timingSafeEqual } from "node:crypto";
import { models } from "@/lib/models";
import { audit } from "@/lib/security/audit";
import { ROLES, type Role } from "./roles";

// Personal API tokens (docs/api-access.md). A token reads
// `tsr_<id>_<secret>`: the id (32 hex digits, the row's random UUID) finds
// the row, the secret (32 random bytes, base64url) proves it. Only the
// secret's SHA-256 is stored: with 256 bits of entropy there is nothing to
// brute-force, so a fast hash is right (unlike passwords).

export const API_TOKEN_PREFIX = "tsr_";
export const API_TOKEN_EXPIRY_DAYS = [7, 30, 90, 365] as const;
export type ApiTokenExpiryDays = (typeof API_TOKEN_EXPIRY_DAYS)[number];
/** How many distinct addresses a token remembers for "used from a new address". */
export const SEEN_ADDRESSES_KEPT = 50;
/** A use refreshes last use at most this often unless the address is new (one write per minute, not per request). */
const LAST_USE_RESOLUTION_MS = 60_000;

const TOKEN_PATTERN = /^tsr_([0-9a-f]{32})_([A-Za-z0-9_-]{43})$/;

export function hashSecret(secret: string): string {
  return createHash("sha256").update(secret, "utf8").digest("hex");
}

/** A new token: its row id, the secret's hash to store, and the whole token to show once. */
export function mintApiToken(): { id: string; secretHash: string; token: string } {
  const id = randomUUID();
  const secret = randomBytes(32).toString("base64url");
  return { id, secretHash: hashSecret(secret), token: `${API_TOKEN_PREFIX}${id.replaceAll("-", "")}_${secret}` };
}

/** The row id (a UUID) and secret of a token, or null when it is not shaped like one. */
export function parseApiToken(token: string): { id: string; secret: string } | null {
  const match = TOKEN_PATTERN.exec(token);
  if (!match) return null;
  const hex = match[1];
  return { id: `${hex.slice(0, 8)}-${hex.slice(8, 12)}-${hex.slice(12, 16)}-${hex.slice(16, 20)}-${hex.slice(20)}`, secret: match[2] };
}

/**
 * The credentials of an `Authorization` header: `{ scheme: "bearer", token }` for
 * `Bearer <token>` (scheme case-insensitive, RFC 9110 §11.1), null when there is no header.
 * Any other header is `{ scheme: "other" }`, which the guard refuses rather than ignores.
 */
export function bearerOf(header: string | null | undefined): { scheme: "bearer"; token: string } | { scheme: "other" } | null {
  if (header === null || header === undefined || header.trim() === "") return null;
  const match = /^\s*bearer\s+(\S+)\s*$/i.exec(header);
  return match ? { scheme: "bearer", token: match[1] } : { scheme: "other" };
}

/** Constant-time comparison of a presented secret against a stored hash. */
export function secretMatches(secret: string, storedHash: string): boolean {
  const a = Buffer.from(hashSecret(secret), "hex");
  const b = Buffer.from(storedHash, "hex");
  return a.length === b.length && timingSafeEqual(a, b);
}

const RANK: Record<Role, number> = { subscriber: 0, economist: 1, steward: 2, manager: 3 };

/** The lower of two roles: what a token may do is its own role capped by its owner's current one. */
export function cappedRole(tokenRole: Role, ownerRole: Role): Role {
  return RANK[tokenRole] <= RANK[ownerRole] ? tokenRole : ownerRole;
}

/** True when a token of `tokenRole` may be made by a member holding `ownerRole`. */
export function roleWithin(tokenRole: Role, ownerRole: Role): boolean {
  return RANK[tokenRole] <= RANK[ownerRole];
}

/** Roles a member holding `ownerRole` may give a token, most senior first. */
export function grantableRoles(ownerRole: Role): Role[] {
  return ROLES.filter((role) => roleWithin(role, ownerRole));
}

export function tokenExpiry(days: ApiTokenExpiryDays, from: Date = new Date()): Date {
  return new Date(from.getTime() + days * 24 * 60 * 60 * 1000);
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
