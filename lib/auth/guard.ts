import { HttpError } from "@/lib/http/errors";
import { SLUG_PATTERN } from "@/lib/http/params";
import { models } from "@/lib/models";
import { countFailure, failuresExhausted, rateLimitMessage } from "@/lib/security/rate-limits";
import { bearerOf, cappedRole } from "./api-token-format";
import { verifyApiToken } from "./api-tokens";
import { can, isRole, type Capability, type Role } from "./roles";
import { ACCESS_MESSAGES, AccessError, TOKEN_MESSAGES } from "./errors";
import { clientIp } from "./client-ip";
import { getSessionUser, type SessionUser } from "./session";

// The one gate. Every route handler, server action and private query calls
// requireMember() first; proxy.ts only redirects visitors without a cookie.
// A route handler passes its request, so a personal API token
// (`Authorization: Bearer tsr_…`, lib/auth/api-tokens.ts) is accepted in
// place of the session, with the same answers.

export type MemberContext = {
  user: SessionUser;
  workspace: { id: number; slug: string; name: string };
  /** The role this request may act with: the member's, or for a token the lower of the token's and the owner's. */
  role: Role;
  /** The API token the request came with; absent for a session. */
  tokenId?: string;
};

/** How requireMember may authenticate a route's request. */
export type AccessOptions = {
  /** The route's request: its `Authorization: Bearer` token is used instead of the session when present. */
  request?: Request;
  /** Refuse API tokens (token management: a token cannot mint tokens). */
  sessionOnly?: boolean;
};

/** What an API token may reach: one workspace, at most one role. */
type TokenBinding = { workspaceId: number; role: Role; tokenId: string };

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
  token?: TokenBinding,
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
  // Missing workspace and missing membership are indistinguishable on purpose; so is a workspace the token is not for.
  if (!workspace || !membership || !isRole(membership.role)) throw new AccessError(404, ACCESS_MESSAGES[404]);
  if (token && token.workspaceId !== workspace.id) throw new AccessError(404, ACCESS_MESSAGES[404]);
  const role = token ? cappedRole(token.role, membership.role) : membership.role;
  if (!can(role, capability)) throw new AccessError(403, ACCESS_MESSAGES[403]);
  const user = await User.findByPk(userId, { attributes: ["id", "email", "name"] });
  if (!user) throw new AccessError(401, ACCESS_MESSAGES[401]);
  return {
    user: { id: user.id, email: user.email, name: user.name },
    workspace: { id: workspace.id, slug: workspace.slug, name: workspace.name },
    role,
    ...(token ? { tokenId: token.tokenId } : {}),
  };
}

/**
 * The caller's membership of `ref` if it grants `capability`; otherwise throws
 * AccessError (or a 429 HttpError after too many bad tokens from one address).
 * The caller is the signed-in user, or, when `options.request` carries
 * `Authorization: Bearer <token>`, the token's owner acting with the token's
 * role capped by their current one, in the token's workspace only.
 */
export async function requireMember(ref: WorkspaceRef, capability: Capability, options: AccessOptions = {}): Promise<MemberContext> {
  const credentials = bearerOf(options.request?.headers.get("authorization"));
  // Other schemes (Basic from a proxy in front of Tessera) are not ours: the session decides.
  if (credentials?.scheme !== "bearer" || !options.request) {
    const user = await getSessionUser();
    return authorizeMember(user?.id ?? null, ref, capability);
  }
  // The same answer whatever the token and the workspace: nothing is looked up.
  if (options.sessionOnly) throw new AccessError(403, TOKEN_MESSAGES.sessionOnly);
  const address = clientIp(options.request.headers);
  const wait = await failuresExhausted("api-token-failure", address);
  if (wait !== null) throw new HttpError(429, rateLimitMessage("api-token-failure", wait), { retryAfterSeconds: wait });
  const grant = await verifyApiToken(credentials.token, address);
  if (!grant) {
    await countFailure("api-token-failure", address);
    throw new AccessError(401, TOKEN_MESSAGES.invalid);
  }
  return authorizeMember(grant.userId, ref, capability, { workspaceId: grant.workspaceId, role: grant.role, tokenId: grant.tokenId });
}

/** The signed-in user or a 401 AccessError, for the few routes that belong to no workspace. */
export async function requireUser(): Promise<SessionUser> {
  const user = await getSessionUser();
  if (!user) throw new AccessError(401, ACCESS_MESSAGES[401]);
  return user;
}
