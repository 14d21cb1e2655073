import { requireMember, requireUser } from "@/lib/auth/guard";
import { can, type Capability, type Role } from "@/lib/auth/roles";
import { env } from "@/lib/config/env";
import { outboxEnabled } from "@/lib/mail/outbox-gate";
import { listWorkspaceTokens } from "@/lib/tokens/queries";
import { listAudit } from "./audit";
import { listPendingInvitations } from "./invitations";
import { countMembers, listMembers, workspacesOf } from "./members";

// Reads for server components. Each calls the guard first and returns plain objects.

export type NavItem = { key: string; label: string; href: string };

const SCREENS: { key: string; label: string; capability: Capability; devOnly?: boolean }[] = [
  { key: "desk", label: "Desk", capability: "results.view" },
  { key: "catalogue", label: "Catalogue", capability: "results.view" },
  { key: "intake", label: "Intake", capability: "data.view-unpublished" },
  { key: "runs", label: "Runs", capability: "runs.manage" },
  { key: "digests", label: "Digests", capability: "digests.subscribe" },
  { key: "team", label: "Team", capability: "team.manage" },
  { key: "outbox", label: "Outbox", capability: "team.manage", devOnly: true },
];

/** The screens a role may open, in nav order. Outbox only while mail goes to the local sink (lib/mail/outbox-gate.ts). */
export function navFor(slug: string, role: Role, outboxEnabled: boolean): NavItem[] {
  return SCREENS.filter((s) => can(role, s.capability) && (!s.devOnly || outboxEnabled)).map((s) => ({
    key: s.key,
    label: s.label,
    href: `/w/${slug}/${s.key}`,
  }));
}

export async function getShell(slug: string) {
  const member = await requireMember(slug, "results.view");
  const workspaces = await workspacesOf(member.user.id);
  return {
    user: member.user,
    role: member.role,
    workspace: member.workspace,
    workspaces,
    nav: navFor(member.workspace.slug, member.role, outboxEnabled(env())),
  };
}

export async function getDesk(slug: string) {
  const member = await requireMember(slug, "results.view");
  return { workspace: member.workspace, role: member.role, user: member.user, memberCount: await countMembers(member.workspace.id) };
}

export async function getTeam(slug: string) {
  const member = await requireMember(slug, "team.manage");
  const [members, invitations, auditTrail, apiTokens] = await Promise.all([
    listMembers(member.workspace.id),
    listPendingInvitations(member.workspace.id),
    listAudit(member.workspace.id),
    listWorkspaceTokens(member.workspace.id),
  ]);
  return { workspace: member.workspace, me: member.user, members, invitations, auditTrail, apiTokens };
}

/** Where "/" sends a signed-in user: the Desk of their first workspace, or null if they have none. */
export async function firstWorkspaceSlug(): Promise<string | null> {
  const user = await requireUser();
  const workspaces = await workspacesOf(user.id);
  return workspaces[0]?.slug ?? null;
}
