import { ROLES, type Role } from "./roles";

// The pure half of personal API tokens (lib/auth/api-tokens.ts holds the
// secrets and the database): the token's shape `tsr_<id>_<secret>`, the
// Authorization header, expiries and role capping. No server imports, so the
// Account screen and the zod schemas share it.

export const API_TOKEN_PREFIX = "tsr_";
export const API_TOKEN_EXPIRY_DAYS = [7, 30, 90, 365] as const;
export type ApiTokenExpiryDays = (typeof API_TOKEN_EXPIRY_DAYS)[number];
const TOKEN_PATTERN = /^tsr_([0-9a-f]{32})_([A-Za-z0-9_-]{43})$/;

/** The row id (a UUID) and secret of a token, or null when it is not shaped like one. */
export function parseApiToken(token: string): { id: string; secret: string } | null {
  const match = TOKEN_PATTERN.exec(token);
  if (!match) return null;
  const hex = match[1];
  return { id: `${hex.slice(0, 8)}-${hex.slice(8, 12)}-${hex.slice(12, 16)}-${hex.slice(16, 20)}-${hex.slice(20)}`, secret: match[2] };
}

/**
 * The credentials of an `Authorization` header: `{ scheme: "bearer", token }` for
 * `Bearer <token>` (scheme case-insensitive, RFC 9110 §11.1; a malformed token is still a
 * token, refused by the guard), null when there is no header. Any other scheme is
 * `{ scheme: "other" }`, which is not Tessera's (Basic from a proxy in front of it): the session decides.
 */
export function bearerOf(header: string | null | undefined): { scheme: "bearer"; token: string } | { scheme: "other" } | null {
  if (header === null || header === undefined || header.trim() === "") return null;
  const match = /^\s*bearer(?:\s+(.*))?$/i.exec(header);
  return match ? { scheme: "bearer", token: (match[1] ?? "").trim() } : { scheme: "other" };
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

