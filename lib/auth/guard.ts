import { SLUG_PATTERN } from "@/lib/http/params";
import { models } from "@/lib/models";
import { can, isRole, type Capability, type Role } from "./roles";
import { ACCESS_MESSAGES, AccessError } from "./errors";
import { getSessionUser, type SessionUser } from "./session";

// The one gate. Every route handler, server action and private query calls
// requireMember() first; proxy.ts only redirects visitors without a cookie.

export type MemberContext = {
  user: SessionUser;
  workspace: { id: number; slug: string; name: string };
  role: Role;
};

/** Workspace by numeric id or by slug. */
export type WorkspaceRef = number | string;

/**
 * Decides access for a known user id (or none). Split from requireMember so it
 * can be exercised without a request. Throws AccessError 401 / 404 / 403.
 */
export async function authorizeMember(
  userId: number | null,
  ref: WorkspaceRef,
  capability: Capability,
): Promise<MemberContext> {
  if (userId === null) throw new AccessError(401, ACCESS_MESSAGES[401]);
  // A slug PostgreSQL would refuse (a NUL byte) or that cannot exist is no workspace: no query for it.
  if (typeof ref === "string" && !SLUG_PATTERN.test(ref)) throw new AccessError(404, ACCESS_MESSAGES[404]);
  const { Membership, Workspace, User } = models();
  const where = typeof ref === "number" ? { id: ref } : { slug: ref };
  const workspace = await Workspace.findOne({ where, attributes: ["id", "slug", "name"] });
  const membership = workspace
    ? await Membership.findOne({ where: { workspaceId: workspace.id, userId }, attributes: ["role"] })
    : null;
  // Missing workspace and missing membership are indistinguishable on purpose.
  if (!workspace || !membership || !isRole(membership.role)) throw new AccessError(404, ACCESS_MESSAGES[404]);
  if (!can(membership.role, capability)) throw new AccessError(403, ACCESS_MESSAGES[403]);
  const user = await User.findByPk(userId, { attributes: ["id", "email", "name"] });
  if (!user) throw new AccessError(401, ACCESS_MESSAGES[401]);
  return {
    user: { id: user.id, email: user.email, name: user.name },
    workspace: { id: workspace.id, slug: workspace.slug, name: workspace.name },
    role: membership.role,
  };
}

/** The signed-in user's membership of `ref` if it grants `capability`; otherwise throws AccessError. */
export async function requireMember(ref: WorkspaceRef, capability: Capability): Promise<MemberContext> {
  const user = await getSessionUser();
  return authorizeMember(user?.id ?? null, ref, capability);
}

/** The signed-in user or a 401 AccessError, for the few routes that belong to no workspace. */
export async function requireUser(): Promise<SessionUser> {
  const user = await getSessionUser();
  if (!user) throw new AccessError(401, ACCESS_MESSAGES[401]);
  return user;
}
