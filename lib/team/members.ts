import { QueryTypes, type Transaction } from "sequelize";
import type { MemberContext } from "@/lib/auth/guard";
import { isRole, type Role } from "@/lib/auth/roles";
import { endSessions } from "@/lib/auth/session-version";
import { db } from "@/lib/db";
import { ConflictError, NotFoundError } from "@/lib/http/errors";
import { models } from "@/lib/models";
import { audit } from "@/lib/security/audit";

// A workspace's members: who is in it with which role, role changes and
// removals. Every exported mutation takes a MemberContext, which only the
// guard produces, so none can run for a caller who was not authorised.
// Reads return plain objects (never model instances) for the client.

export type MemberRow = { userId: number; name: string; email: string; role: Role; joinedAt: string };

export async function listMembers(workspaceId: number): Promise<MemberRow[]> {
  const rows = await db().query<{ user_id: number; name: string; email: string; role: string; created_at: Date }>(
    `SELECT m.user_id, u.name, u.email, m.role, m.created_at
       FROM memberships m JOIN users u ON u.id = m.user_id
      WHERE m.workspace_id = $1
      ORDER BY CASE m.role WHEN 'manager' THEN 0 WHEN 'steward' THEN 1 WHEN 'economist' THEN 2 ELSE 3 END, u.name`,
    { bind: [workspaceId], type: QueryTypes.SELECT },
  );
  return rows.flatMap((r) =>
    isRole(r.role)
      ? [{ userId: r.user_id, name: r.name, email: r.email, role: r.role, joinedAt: new Date(r.created_at).toISOString() }]
      : [],
  );
}

export async function countMembers(workspaceId: number): Promise<number> {
  const { Membership } = models();
  return Membership.count({ where: { workspaceId } });
}

/** Locks the workspace row so membership changes in one workspace (members, invitations) happen one at a time. */
export async function lockWorkspace(workspaceId: number, transaction: Transaction): Promise<void> {
  await db().query("SELECT id FROM workspaces WHERE id = $1 FOR UPDATE", { bind: [workspaceId], transaction });
}

async function managerCount(workspaceId: number, transaction: Transaction): Promise<number> {
  const { Membership } = models();
  return Membership.count({ where: { workspaceId, role: "manager" }, transaction });
}

async function findMembership(workspaceId: number, userId: number, transaction: Transaction) {
  const { Membership, User } = models();
  const membership = await Membership.findOne({ where: { workspaceId, userId }, transaction });
  if (!membership) throw new NotFoundError("That person is not a member of this workspace.");
  const user = await User.findByPk(userId, { attributes: ["email", "name"], transaction });
  return { membership, email: user?.email ?? null };
}

export async function changeRole(actor: MemberContext, userId: number, role: Role): Promise<MemberRow[]> {
  const workspaceId = actor.workspace.id;
  await db().transaction(async (transaction) => {
    await lockWorkspace(workspaceId, transaction);
    const { membership, email } = await findMembership(workspaceId, userId, transaction);
    const from = membership.role;
    if (from === role) return;
    if (from === "manager" && (await managerCount(workspaceId, transaction)) <= 1) {
      throw new ConflictError("This is the workspace's last manager. Make someone else a manager first.");
    }
    membership.role = role;
    await membership.save({ transaction });
    await audit(
      {
        workspaceId,
        actorId: actor.user.id,
        actorEmail: actor.user.email,
        action: "member.role-changed",
        target: email,
        detail: { from, to: role },
      },
      transaction,
    );
  });
  return listMembers(workspaceId);
}

export async function removeMember(actor: MemberContext, userId: number): Promise<MemberRow[]> {
  const workspaceId = actor.workspace.id;
  await db().transaction(async (transaction) => {
    await lockWorkspace(workspaceId, transaction);
    const { membership, email } = await findMembership(workspaceId, userId, transaction);
    if (membership.role === "manager" && (await managerCount(workspaceId, transaction)) <= 1) {
      throw new ConflictError("This is the workspace's last manager and cannot be removed. Make someone else a manager first.");
    }
    const role = membership.role;
    // The user's row is locked so that two removals from their last two
    // workspaces at once cannot each see the other membership and both skip
    // ending the sessions.
    await db().query("SELECT id FROM users WHERE id = $1 FOR UPDATE", { bind: [userId], transaction });
    await membership.destroy({ transaction });
    // Someone left with no workspace has no reason to stay signed in: their
    // open sessions end now rather than when the JWT expires.
    const { Membership } = models();
    if ((await Membership.count({ where: { userId }, transaction })) === 0) await endSessions(userId, { transaction });
    // Their API tokens here end too, so that joining again later does not bring old tokens back.
    const [revokedTokens] = await models().ApiToken.update(
      { revokedAt: new Date(), revokedBy: actor.user.id },
      { where: { workspaceId, userId, revokedAt: null }, transaction },
    );
    await audit(
      {
        workspaceId,
        actorId: actor.user.id,
        actorEmail: actor.user.email,
        action: "member.removed",
        target: email,
        detail: { role, revokedTokens },
      },
      transaction,
    );
  });
  return listMembers(workspaceId);
}

/** Workspaces the user belongs to, for the switcher and the "/" redirect. */
export async function workspacesOf(userId: number): Promise<{ slug: string; name: string; role: Role }[]> {
  const rows = await db().query<{ slug: string; name: string; role: string }>(
    `SELECT w.slug, w.name, m.role FROM memberships m JOIN workspaces w ON w.id = m.workspace_id
      WHERE m.user_id = $1 ORDER BY m.created_at, w.name`,
    { bind: [userId], type: QueryTypes.SELECT },
  );
  return rows.flatMap((r) => (isRole(r.role) ? [{ slug: r.slug, name: r.name, role: r.role }] : []));
}
