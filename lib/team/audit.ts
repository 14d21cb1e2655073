import { QueryTypes } from "sequelize";
import { db } from "@/lib/db";

// The audit trail as a workspace's managers read it on the Team screen. The
// events are written through lib/security/audit.ts.

export type AuditRow = {
  id: string;
  at: string;
  action: string;
  actor: string | null;
  target: string | null;
  detail: Record<string, unknown>;
};

/**
 * The workspace's own events plus the sign-ins (which belong to no workspace)
 * of people who are members now. Sign-in failures for addresses that are not
 * members stay out: they are none of this workspace's business.
 */
export async function listAudit(workspaceId: number, limit = 100): Promise<AuditRow[]> {
  const rows = await db().query<{
    id: string;
    at: Date;
    action: string;
    actor_name: string | null;
    actor_email: string | null;
    target: string | null;
    detail: Record<string, unknown>;
  }>(
    `SELECT e.id, e.at, e.action, u.name AS actor_name, COALESCE(e.actor_email, u.email) AS actor_email, e.target, e.detail
       FROM audit_events e LEFT JOIN users u ON u.id = e.actor_id
      WHERE e.workspace_id = $1
         OR (e.workspace_id IS NULL AND e.action LIKE 'sign-in.%' AND e.actor_email IN (
               SELECT mu.email FROM memberships mm JOIN users mu ON mu.id = mm.user_id WHERE mm.workspace_id = $1))
      ORDER BY e.at DESC, e.id DESC
      LIMIT $2`,
    { bind: [workspaceId, limit], type: QueryTypes.SELECT },
  );
  return rows.map((r) => ({
    id: String(r.id),
    at: new Date(r.at).toISOString(),
    action: r.action,
    actor: r.actor_name && r.actor_email ? `${r.actor_name} (${r.actor_email})` : (r.actor_name ?? r.actor_email),
    target: r.target,
    detail: r.detail ?? {},
  }));
}
