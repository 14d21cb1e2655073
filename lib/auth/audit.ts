import type { Transaction } from "sequelize";
import { models } from "@/models";
import type { AuditAction } from "@/models/audit-event";

export type AuditInput = {
  workspaceId: number | null;
  actorId: number | null;
  actorEmail: string | null;
  action: AuditAction;
  target?: string | null;
  detail?: Record<string, unknown>;
};

/** Appends one event to the audit trail (inside the caller's transaction when given). */
export async function audit(input: AuditInput, transaction?: Transaction): Promise<void> {
  const { AuditEvent } = models();
  await AuditEvent.create(
    {
      workspaceId: input.workspaceId,
      actorId: input.actorId,
      actorEmail: input.actorEmail,
      action: input.action,
      target: input.target ?? null,
      detail: input.detail ?? {},
    },
    { transaction },
  );
}
