import { UniqueConstraintError } from "sequelize";
import { audit } from "@/lib/security/audit";
import { ConflictError } from "@/lib/http/errors";
import type { SessionUser } from "@/lib/auth/session";
import { db } from "@/lib/db";
import { models } from "@/lib/models";
import type { CreateWorkspaceInput } from "./schemas";

export type CreatedWorkspace = { id: number; slug: string; name: string };

/**
 * A new workspace with `user` as its first (and only) manager, and the audit
 * event that records it — all in one transaction, so a workspace never exists
 * without a manager (the roles table in docs/guarantees.md: the creator is its first manager).
 * A taken address is a ConflictError (409), also when two requests race for it:
 * the unique index decides, not a read before the write.
 */
export async function createWorkspace(user: SessionUser, input: CreateWorkspaceInput): Promise<CreatedWorkspace> {
  const { Workspace, Membership } = models();
  try {
    return await db().transaction(async (transaction) => {
      const workspace = await Workspace.create({ slug: input.slug, name: input.name, createdBy: user.id }, { transaction });
      await Membership.create({ workspaceId: workspace.id, userId: user.id, role: "manager" }, { transaction });
      await audit(
        { workspaceId: workspace.id, actorId: user.id, actorEmail: user.email, action: "workspace.created", target: `workspace "${workspace.name}"`, detail: { slug: workspace.slug } },
        transaction,
      );
      return { id: workspace.id, slug: workspace.slug, name: workspace.name };
    });
  } catch (error) {
    if (error instanceof UniqueConstraintError) throw new ConflictError(`The address "${input.slug}" is already taken. Choose another.`);
    throw error;
  }
}
