import { DataTypes } from "sequelize";
import { db } from "@/lib/db";
import { ROLES } from "@/lib/auth/roles";
import { AuditEvent } from "./audit-event";
import { Invitation } from "./invitation";
import { LoginAttempt } from "./login-attempt";
import { Membership } from "./membership";
import { User } from "./user";
import { Workspace } from "./workspace";

// Columns mirror migrations/20261201000200-* onward; the schema itself is only
// ever changed there (never sync()). A module-level flag rather than a global:
// after a dev reload the classes are new objects and must be initialised again.
let ready = false;

function initModels(): void {
  if (ready) return;
  const sequelize = db();
  const common = { sequelize, underscored: true };

  User.init(
    {
      id: { type: DataTypes.INTEGER, autoIncrement: true, primaryKey: true },
      email: {
        type: DataTypes.STRING(320),
        allowNull: false,
        unique: true,
        set(value: string) {
          this.setDataValue("email", value.trim().toLowerCase());
        },
      },
      name: { type: DataTypes.STRING(200), allowNull: false },
      passwordHash: { type: DataTypes.STRING(100), allowNull: false },
      createdAt: DataTypes.DATE,
      updatedAt: DataTypes.DATE,
    },
    { ...common, tableName: "users", modelName: "User" },
  );

  Workspace.init(
    {
      id: { type: DataTypes.INTEGER, autoIncrement: true, primaryKey: true },
      slug: { type: DataTypes.STRING(64), allowNull: false, unique: true },
      name: { type: DataTypes.STRING(200), allowNull: false },
      createdBy: { type: DataTypes.INTEGER, allowNull: true },
      createdAt: DataTypes.DATE,
      updatedAt: DataTypes.DATE,
    },
    { ...common, tableName: "workspaces", modelName: "Workspace" },
  );

  Membership.init(
    {
      id: { type: DataTypes.INTEGER, autoIncrement: true, primaryKey: true },
      userId: { type: DataTypes.INTEGER, allowNull: false },
      workspaceId: { type: DataTypes.INTEGER, allowNull: false },
      role: { type: DataTypes.STRING(20), allowNull: false, validate: { isIn: [ROLES as unknown as string[]] } },
      createdAt: DataTypes.DATE,
      updatedAt: DataTypes.DATE,
    },
    { ...common, tableName: "memberships", modelName: "Membership" },
  );

  Invitation.init(
    {
      id: { type: DataTypes.INTEGER, autoIncrement: true, primaryKey: true },
      workspaceId: { type: DataTypes.INTEGER, allowNull: false },
      email: {
        type: DataTypes.STRING(320),
        allowNull: false,
        set(value: string) {
          this.setDataValue("email", value.trim().toLowerCase());
        },
      },
      role: { type: DataTypes.STRING(20), allowNull: false, validate: { isIn: [ROLES as unknown as string[]] } },
      tokenHash: { type: DataTypes.STRING(64), allowNull: false, unique: true },
      expiresAt: { type: DataTypes.DATE, allowNull: false },
      acceptedAt: { type: DataTypes.DATE, allowNull: true },
      acceptedBy: { type: DataTypes.INTEGER, allowNull: true },
      revokedAt: { type: DataTypes.DATE, allowNull: true },
      invitedBy: { type: DataTypes.INTEGER, allowNull: true },
      createdAt: DataTypes.DATE,
      updatedAt: DataTypes.DATE,
    },
    { ...common, tableName: "invitations", modelName: "Invitation" },
  );

  AuditEvent.init(
    {
      id: { type: DataTypes.BIGINT, autoIncrement: true, primaryKey: true },
      workspaceId: { type: DataTypes.INTEGER, allowNull: true },
      actorId: { type: DataTypes.INTEGER, allowNull: true },
      actorEmail: { type: DataTypes.STRING(320), allowNull: true },
      action: { type: DataTypes.STRING(64), allowNull: false },
      target: { type: DataTypes.STRING(320), allowNull: true },
      detail: { type: DataTypes.JSONB, allowNull: false, defaultValue: {} },
      at: { type: DataTypes.DATE, allowNull: false, defaultValue: DataTypes.NOW },
    },
    { ...common, tableName: "audit_events", modelName: "AuditEvent", timestamps: false },
  );

  LoginAttempt.init(
    {
      id: { type: DataTypes.BIGINT, autoIncrement: true, primaryKey: true },
      email: { type: DataTypes.STRING(320), allowNull: false },
      ip: { type: DataTypes.STRING(64), allowNull: false },
      succeeded: { type: DataTypes.BOOLEAN, allowNull: false },
      at: { type: DataTypes.DATE, allowNull: false, defaultValue: DataTypes.NOW },
    },
    { ...common, tableName: "login_attempts", modelName: "LoginAttempt", timestamps: false },
  );

  // Associations, all in one place.
  User.hasMany(Membership, { foreignKey: "userId", as: "memberships" });
  Membership.belongsTo(User, { foreignKey: "userId", as: "user" });
  Workspace.hasMany(Membership, { foreignKey: "workspaceId", as: "memberships" });
  Membership.belongsTo(Workspace, { foreignKey: "workspaceId", as: "workspace" });
  Workspace.belongsTo(User, { foreignKey: "createdBy", as: "creator" });
  Workspace.hasMany(Invitation, { foreignKey: "workspaceId", as: "invitations" });
  Invitation.belongsTo(Workspace, { foreignKey: "workspaceId", as: "workspace" });
  Invitation.belongsTo(User, { foreignKey: "invitedBy", as: "inviter" });
  Workspace.hasMany(AuditEvent, { foreignKey: "workspaceId", as: "auditEvents" });
  AuditEvent.belongsTo(User, { foreignKey: "actorId", as: "actor" });

  ready = true;
}

/** Initialises the models on first use and returns them. */
export function models() {
  initModels();
  return { User, Workspace, Membership, Invitation, AuditEvent, LoginAttempt };
}

export { AuditEvent, Invitation, LoginAttempt, Membership, User, Workspace };
