import type { Transaction } from "sequelize";
import { models } from "@/lib/models";
import type { AuditAction } from "@/models/audit-event";

// The audit trail's writer: sign-ins and password changes (lib/auth), team
// changes (lib/team), intake, runs, digests and workspaces all append their
// events here; the Team screen reads them through lib/team/audit.ts. Shared
// infrastructure: it imports no domain and not lib/auth, so identity code can
// record events without an import running up to the domains.

/** Who acted, as a MemberContext (lib/auth/guard.ts) carries it. */
export type AuditActor = { workspace: { id: number }; user: { id: number; email: string } };

export type AuditInput = {
  workspaceId: number | null;
  actorId: number | null;
  actorEmail: string | null;
  action: AuditAction;
  target?: string | null;
  detail?: Record<string, unknown>;
};

/** Width of audit_events.target; a longer target is clipped so the audit write never fails the action it records. */
export const AUDIT_TARGET_MAX = 320;

function clip(text: string | null | undefined): string | null {
  if (text === null || text === undefined) return null;
  return text.length <= AUDIT_TARGET_MAX ? text : `${text.slice(0, AUDIT_TARGET_MAX - 1)}…`;
}

/** Appends one event to the audit trail (inside the caller's transaction when given). */
export async function audit(input: AuditInput, transaction?: Transaction): Promise<void> {
  const { AuditEvent } = models();
  await AuditEvent.create(
    {
      workspaceId: input.workspaceId,
      actorId: input.actorId,
      actorEmail: input.actorEmail,
      action: input.action,
      target: clip(input.target),
      detail: input.detail ?? {},
    },
    { transaction },
  );
}

/** One event done by a member in their own workspace, inside the transaction of the change it records. */
export async function auditMember(
  member: AuditActor,
  event: { action: AuditAction; target: string; detail: Record<string, unknown> },
  transaction: Transaction,
): Promise<void> {
  await audit({ workspaceId: member.workspace.id, actorId: member.user.id, actorEmail: member.user.email, ...event }, transaction);
}

/** How a boundary or panel version reads in the trail: `panel "Veldmark indicators" v3`. */
export function versionTarget(kind: "boundaries" | "panel", parentName: string, version: number): string {
  return `${kind === "panel" ? "panel" : "boundaries"} "${parentName}" v${version}`;
}
