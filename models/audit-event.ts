import { Model, type CreationOptional, type InferAttributes, type InferCreationAttributes } from "sequelize";

export type AuditAction =
  | "sign-in.succeeded"
  | "sign-in.failed"
  | "sign-in.throttled"
  | "account.password-changed"
  | "invitation.sent"
  | "invitation.accepted"
  | "member.role-changed"
  | "member.removed"
  // Data actions, written in the same transaction as the change they record.
  | "upload.completed"
  | "version.submitted"
  | "version.published"
  | "version.archived"
  | "indicator.updated"
  | "crosswalk.created"
  | "panel.harmonised"
  | "run.started"
  | "run.rerun"
  | "run.cancelled"
  | "digest.sent-now"
  | "workspace.created"
  // Personal API tokens (lib/tokens, lib/auth/api-tokens.ts).
  | "api-token.created"
  | "api-token.used-from-new-address"
  | "api-token.revoked";

export class AuditEvent extends Model<InferAttributes<AuditEvent>, InferCreationAttributes<AuditEvent>> {
  declare id: CreationOptional<string>;
  /** Null for events that belong to no single workspace (sign-ins). */
  declare workspaceId: number | null;
  declare actorId: number | null;
  declare actorEmail: string | null;
  declare action: AuditAction;
  declare target: string | null;
  declare detail: CreationOptional<Record<string, unknown>>;
  declare at: CreationOptional<Date>;
}
