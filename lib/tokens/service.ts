import { Op } from "sequelize";
import { roleWithin, tokenExpiry } from "@/lib/auth/api-token-format";
import { mintApiToken } from "@/lib/auth/api-tokens";
import type { MemberContext } from "@/lib/auth/guard";
import { can, ROLE_LABELS } from "@/lib/auth/roles";
import { db } from "@/lib/db";
import { ConflictError, HttpError, NotFoundError } from "@/lib/http/errors";
import { models } from "@/lib/models";
import { auditMember } from "@/lib/security/audit";
import { viewOf } from "./queries";
import type { ApiTokenView, CreatedToken, CreateTokenInput } from "./schemas";

// Creating and revoking personal API tokens. Both are audited in the same
// transaction as the change. The routes that call these are session-only
// (memberRoute's sessionOnly): a token never mints or revokes tokens.

/** Unrevoked, unexpired tokens one member may hold in one workspace. */
export const ACTIVE_TOKENS_PER_MEMBER = 20;

export async function createToken(member: MemberContext, input: CreateTokenInput, now: Date = new Date()): Promise<CreatedToken> {
  if (!roleWithin(input.role, member.role)) {
    throw new HttpError(403, `role: a token can have at most your own role in this workspace (${ROLE_LABELS[member.role]}).`, { field: "role" });
  }
  const { ApiToken } = models();
  const active = await ApiToken.count({
    where: { workspaceId: member.workspace.id, userId: member.user.id, revokedAt: null, expiresAt: { [Op.gt]: now } },
  });
  if (active >= ACTIVE_TOKENS_PER_MEMBER) {
    throw new ConflictError(`You already have ${ACTIVE_TOKENS_PER_MEMBER} active tokens in this workspace, the most allowed. Revoke one you no longer use first.`);
  }
  const minted = mintApiToken();
  const row = await db().transaction(async (transaction) => {
    const created = await ApiToken.create(
      {
        id: minted.id,
        workspaceId: member.workspace.id,
        userId: member.user.id,
        name: input.name,
        role: input.role,
        secretHash: minted.secretHash,
        expiresAt: tokenExpiry(input.expiresInDays, now),
      },
      { transaction },
    );
    await auditMember(
      member,
      { action: "api-token.created", target: `API token "${input.name}"`, detail: { tokenId: minted.id, role: input.role, expiresAt: created.expiresAt.toISOString() } },
      transaction,
    );
    return created;
  });
  return { token: minted.token, apiToken: viewOf(row, member.user, now) };
}

/**
 * Revokes a token of the workspace: the member's own, or anyone's for a
 * manager. Someone else's token is a 404 for a member who is not a manager,
 * exactly like a token that does not exist. Revoking a revoked token changes nothing.
 */
export async function revokeToken(member: MemberContext, tokenId: string, now: Date = new Date()): Promise<ApiTokenView> {
  const { ApiToken, User } = models();
  return db().transaction(async (transaction) => {
    const row = await ApiToken.findOne({ where: { id: tokenId, workspaceId: member.workspace.id }, transaction, lock: transaction.LOCK.UPDATE });
    if (!row || (row.userId !== member.user.id && !can(member.role, "team.manage"))) throw new NotFoundError("There is no such token in this workspace.");
    const owner = await User.findByPk(row.userId, { attributes: ["id", "name", "email"], transaction });
    if (!owner) throw new NotFoundError("There is no such token in this workspace.");
    if (!row.revokedAt) {
      await row.update({ revokedAt: now, revokedBy: member.user.id }, { transaction });
      await auditMember(
        member,
        { action: "api-token.revoked", target: `API token "${row.name}" of ${owner.email}`, detail: { tokenId: row.id, ownerId: owner.id } },
        transaction,
      );
    }
    return viewOf(row, owner, now);
  });
}
