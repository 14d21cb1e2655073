import { QueryTypes } from "sequelize";
import type { MemberContext } from "@/lib/auth/guard";
import { hashPassword } from "@/lib/auth/passwords";
import { ROLE_LABELS, isRole, type Role } from "@/lib/auth/roles";
import { createToken, hashToken, invitationExpiry, looksLikeToken } from "@/lib/auth/tokens";
import { env } from "@/lib/config/env";
import { db } from "@/lib/db";
import { ConflictError, HttpError, NotFoundError } from "@/lib/http/errors";
import { enqueue } from "@/lib/jobs/enqueue";
import { models } from "@/lib/models";
import { normaliseEmail } from "@/models/user";
import { audit } from "@/lib/security/audit";
import { lockWorkspace } from "./members";

// Invitations to a workspace: sent by a manager (the e-mail goes out as a
// job, lib/team/invitation-mail.ts), viewed and accepted through the link's
// token, revoked. Mutations by members take a MemberContext, which only the
// guard produces; accepting takes the token, the only credential there.

export type InvitationRow = {
  id: number;
  email: string;
  role: Role;
  expiresAt: string;
  createdAt: string;
  invitedBy: string | null;
};
export async function listPendingInvitations(workspaceId: number): Promise<InvitationRow[]> {
  const rows = await db().query<{
    id: number;
    email: string;
    role: string;
    expires_at: Date;
    created_at: Date;
    inviter: string | null;
  }>(
    `SELECT i.id, i.email, i.role, i.expires_at, i.created_at, u.name AS inviter
       FROM invitations i LEFT JOIN users u ON u.id = i.invited_by
      WHERE i.workspace_id = $1 AND i.accepted_at IS NULL AND i.revoked_at IS NULL AND i.expires_at > now()
      ORDER BY i.created_at DESC`,
    { bind: [workspaceId], type: QueryTypes.SELECT },
  );
  return rows.flatMap((r) =>
    isRole(r.role)
      ? [
          {
            id: r.id,
            email: r.email,
            role: r.role,
            expiresAt: new Date(r.expires_at).toISOString(),
            createdAt: new Date(r.created_at).toISOString(),
            invitedBy: r.inviter,
          },
        ]
      : [],
  );
}

export function invitationUrl(token: string): string {
  return new URL(`/invite/${token}`, env().NEXTAUTH_URL).toString();
}

/**
 * Creates an invitation and queues its e-mail. Older pending invitations to the
 * same address in this workspace are revoked so only the newest link works.
 * Returns the token only so tests can follow the link; callers must not show it.
 */
export async function createInvitation(
  actor: MemberContext,
  rawEmail: string,
  role: Role,
): Promise<{ invitation: InvitationRow; token: string }> {
  const workspaceId = actor.workspace.id;
  const email = normaliseEmail(rawEmail);
  const { token, hash } = createToken();
  const expiresAt = invitationExpiry();
  const { Invitation } = models();

  const created = await db().transaction(async (transaction) => {
    await lockWorkspace(workspaceId, transaction);
    const [existing] = await db().query<{ id: number }>(
      `SELECT m.id FROM memberships m JOIN users u ON u.id = m.user_id WHERE m.workspace_id = $1 AND u.email = $2`,
      { bind: [workspaceId, email], type: QueryTypes.SELECT, transaction },
    );
    if (existing) throw new ConflictError(`${email} is already a member of this workspace.`);
    await Invitation.update(
      { revokedAt: new Date() },
      { where: { workspaceId, email, acceptedAt: null, revokedAt: null }, transaction },
    );
    const invitation = await Invitation.create(
      { workspaceId, email, role, tokenHash: hash, expiresAt, invitedBy: actor.user.id },
      { transaction },
    );
    await audit(
      {
        workspaceId,
        actorId: actor.user.id,
        actorEmail: actor.user.email,
        action: "invitation.sent",
        target: email,
        detail: { role, invitationId: invitation.id },
      },
      transaction,
    );
    return invitation;
  });

  // Queued after the commit: the worker must find the invitation it mails about.
  await enqueue("invitation-email", {
    invitationId: created.id,
    to: email,
    workspaceName: actor.workspace.name,
    roleLabel: ROLE_LABELS[role],
    inviterName: actor.user.name,
    acceptUrl: invitationUrl(token),
    expiresAt: expiresAt.toISOString(),
  });

  return {
    token,
    invitation: {
      id: created.id,
      email,
      role,
      expiresAt: expiresAt.toISOString(),
      createdAt: created.createdAt.toISOString(),
      invitedBy: actor.user.name,
    },
  };
}

export async function revokeInvitation(actor: MemberContext, invitationId: number): Promise<void> {
  const { Invitation } = models();
  const [count] = await Invitation.update(
    { revokedAt: new Date() },
    { where: { id: invitationId, workspaceId: actor.workspace.id, acceptedAt: null, revokedAt: null } },
  );
  if (count === 0) throw new NotFoundError("That invitation is not pending in this workspace.");
}

export type InvitationState = "pending" | "expired" | "used" | "revoked" | "unknown";
export type InvitationView = {
  state: InvitationState;
  workspaceName?: string;
  workspaceSlug?: string;
  email?: string;
  role?: Role;
  expiresAt?: string;
  accountExists?: boolean;
};

function stateOf(inv: { acceptedAt: Date | null; revokedAt: Date | null; expiresAt: Date }, now: Date): InvitationState {
  if (inv.acceptedAt) return "used";
  if (inv.revokedAt) return "revoked";
  if (inv.expiresAt.getTime() <= now.getTime()) return "expired";
  return "pending";
}

/** What the accept page shows for a token. The token is the only credential here. */
export async function viewInvitation(token: string, now: Date = new Date()): Promise<InvitationView> {
  if (!looksLikeToken(token)) return { state: "unknown" };
  const { Invitation, Workspace, User } = models();
  const inv = await Invitation.findOne({ where: { tokenHash: hashToken(token) } });
  if (!inv || !isRole(inv.role)) return { state: "unknown" };
  const state = stateOf(inv, now);
  if (state !== "pending") return { state };
  const workspace = await Workspace.findByPk(inv.workspaceId, { attributes: ["name", "slug"] });
  const account = await User.findOne({ where: { email: inv.email }, attributes: ["id"] });
  return {
    state,
    workspaceName: workspace?.name,
    workspaceSlug: workspace?.slug,
    email: inv.email,
    role: inv.role,
    expiresAt: inv.expiresAt.toISOString(),
    accountExists: Boolean(account),
  };
}

export const INVITATION_MESSAGES: Record<Exclude<InvitationState, "pending">, string> = {
  expired: "This invitation has expired. Ask the manager who invited you to send a new one.",
  used: "This invitation has already been used. If that was you, sign in; otherwise ask for a new invitation.",
  revoked: "This invitation was withdrawn, usually because a newer one was sent. Use the latest e-mail, or ask for a new invitation.",
  unknown: "This invitation link is not valid. Check that you copied the whole link from the e-mail.",
};

export class InvitationError extends HttpError {
  constructor(
    override readonly status: 400 | 401 | 403 | 409 | 410,
    message: string,
    readonly field: string | null = null,
  ) {
    super(status, message, { field });
    this.name = "InvitationError";
  }
}

/**
 * Accepts an invitation. The token is bound to the invited address: it only
 * ever adds that address's account to the workspace.
 * - An account for the address exists: the caller must be signed in as it.
 * - No account exists: the caller gives a name and password and exactly that
 *   address's account is created — but only when nobody is signed in. A
 *   visitor signed in as another account (say a manager of another workspace
 *   who came across the link) is refused, so one person never ends up
 *   creating another's account from their own session.
 * Refusals change nothing and leave the invitation pending for its addressee.
 * Single use: the row is locked and marked accepted in the same transaction
 * that creates the membership.
 */
export async function acceptInvitation(input: {
  token: string;
  sessionUserId: number | null;
  name?: string;
  password?: string;
}): Promise<{ workspaceSlug: string; email: string; createdAccount: boolean }> {
  if (!looksLikeToken(input.token)) throw new InvitationError(410, INVITATION_MESSAGES.unknown);
  const { Invitation, Membership, User, Workspace } = models();
  return db().transaction(async (transaction) => {
    const inv = await Invitation.findOne({
      where: { tokenHash: hashToken(input.token) },
      lock: transaction.LOCK.UPDATE,
      transaction,
    });
    if (!inv || !isRole(inv.role)) throw new InvitationError(410, INVITATION_MESSAGES.unknown);
    const state = stateOf(inv, new Date());
    if (state !== "pending") throw new InvitationError(410, INVITATION_MESSAGES[state]);

    let user = await User.findOne({ where: { email: inv.email }, transaction });
    let createdAccount = false;
    if (user) {
      if (input.sessionUserId === null) {
        throw new InvitationError(401, `An account for ${inv.email} already exists. Sign in with it to accept.`);
      }
      if (input.sessionUserId !== user.id) {
        throw new InvitationError(
          403,
          `This invitation is for ${inv.email}, but you are signed in with another account. Sign out, then open the link again.`,
        );
      }
    } else {
      if (input.sessionUserId !== null) {
        throw new InvitationError(
          403,
          `This invitation is for ${inv.email}, but you are signed in with another account. Sign out, then open the link again.`,
        );
      }
      if (!input.name) throw new InvitationError(400, "name: Enter your name.", "name");
      if (!input.password) throw new InvitationError(400, "password: Choose a password.", "password");
      user = await User.create(
        { email: inv.email, name: input.name, passwordHash: await hashPassword(input.password) },
        { transaction },
      );
      createdAccount = true;
    }

    await db().query("SELECT id FROM workspaces WHERE id = $1 FOR UPDATE", { bind: [inv.workspaceId], transaction });
    const existing = await Membership.findOne({ where: { workspaceId: inv.workspaceId, userId: user.id }, transaction });
    if (existing) {
      throw new InvitationError(409, "You are already a member of this workspace. Sign in to open it.");
    }
    await Membership.create({ workspaceId: inv.workspaceId, userId: user.id, role: inv.role }, { transaction });
    inv.acceptedAt = new Date();
    inv.acceptedBy = user.id;
    await inv.save({ transaction });
    await audit(
      {
        workspaceId: inv.workspaceId,
        actorId: user.id,
        actorEmail: user.email,
        action: "invitation.accepted",
        target: user.email,
        detail: { role: inv.role, invitationId: inv.id, createdAccount },
      },
      transaction,
    );
    const workspace = await Workspace.findByPk(inv.workspaceId, { attributes: ["slug"], transaction });
    return { workspaceSlug: workspace?.slug ?? "", email: user.email, createdAccount };
  });
}
