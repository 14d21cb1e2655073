import { isRole, type Role } from "@/lib/auth/roles";
import { models } from "@/lib/models";
import type { ApiToken, User } from "@/models";
import type { ApiTokenState, ApiTokenView } from "./schemas";

// Reads of personal API tokens for the Account and Team screens and their routes.

const LIST_LIMIT = 500;

export function stateOf(row: Pick<ApiToken, "revokedAt" | "expiresAt">, now: Date = new Date()): ApiTokenState {
  if (row.revokedAt) return "revoked";
  return row.expiresAt.getTime() <= now.getTime() ? "expired" : "active";
}

export function viewOf(row: ApiToken, owner: Pick<User, "id" | "name" | "email">, now: Date = new Date()): ApiTokenView {
  return {
    id: row.id,
    name: row.name,
    role: row.role,
    state: stateOf(row, now),
    createdAt: row.createdAt.toISOString(),
    expiresAt: row.expiresAt.toISOString(),
    lastUsedAt: row.lastUsedAt ? row.lastUsedAt.toISOString() : null,
    lastAddress: row.lastAddress ?? null,
    revokedAt: row.revokedAt ? row.revokedAt.toISOString() : null,
    owner: { id: owner.id, name: owner.name, email: owner.email },
  };
}

async function list(where: { workspaceId: number; userId?: number }): Promise<ApiTokenView[]> {
  const { ApiToken, User } = models();
  const rows = await ApiToken.findAll({ where, order: [["createdAt", "DESC"], ["id", "ASC"]], limit: LIST_LIMIT });
  const ownerIds = [...new Set(rows.map((r) => r.userId))];
  const owners = new Map((await User.findAll({ where: { id: ownerIds }, attributes: ["id", "name", "email"] })).map((u) => [u.id, u]));
  return rows.flatMap((row) => {
    const owner = owners.get(row.userId);
    return owner ? [viewOf(row, owner)] : [];
  });
}

/** A member's own tokens in one workspace, newest first (revoked and expired ones too, marked). */
export function listOwnTokens(workspaceId: number, userId: number): Promise<ApiTokenView[]> {
  return list({ workspaceId, userId });
}

/** Every member's tokens in one workspace, for its managers. */
export function listWorkspaceTokens(workspaceId: number): Promise<ApiTokenView[]> {
  return list({ workspaceId });
}

/** The Account screen's tokens: each workspace the user belongs to, their role there and their own tokens in it. */
export async function accountTokens(userId: number): Promise<{ workspace: { slug: string; name: string }; role: Role; tokens: ApiTokenView[] }[]> {
  const { Membership, Workspace } = models();
  const memberships = await Membership.findAll({ where: { userId }, order: [["createdAt", "ASC"]], attributes: ["workspaceId", "role"] });
  const workspaces = new Map(
    (await Workspace.findAll({ where: { id: memberships.map((m) => m.workspaceId) }, attributes: ["id", "slug", "name"] })).map((w) => [w.id, w]),
  );
  const out = [];
  for (const membership of memberships) {
    const workspace = workspaces.get(membership.workspaceId);
    if (!workspace || !isRole(membership.role)) continue;
    out.push({ workspace: { slug: workspace.slug, name: workspace.name }, role: membership.role, tokens: await listOwnTokens(workspace.id, userId) });
  }
  return out;
}
