import { DataTypes, type Sequelize } from "sequelize";
import { ApiToken } from "./api-token";
import { AuditEvent } from "./audit-event";
import { BoundarySet } from "./boundary-set";
import { BoundaryVersion } from "./boundary-version";
import { ColumnMappingMemory } from "./column-mapping";
import { Indicator } from "./indicator";
import { Panel } from "./panel";
import { PanelVersion } from "./panel-version";
import { Upload } from "./upload";
import { UPLOAD_KINDS, UPLOAD_STATES, VERSION_STATES } from "./intake-types";
import { Invitation } from "./invitation";
import { LoginAttempt } from "./login-attempt";
import { Membership } from "./membership";
import { ROLES } from "./roles";
import { User } from "./user";
import { Workspace } from "./workspace";
import { Run, initRunModel } from "./run";

// Columns mirror migrations/20261201000200-* onward; the schema itself is only
// ever changed there (never sync()). Tables without a model here (regions,
// run_pieces, run_results, digest_subscriptions, digest_deliveries, …) are
// read and written with SQL by their domain in lib/.
//
// The models take their Sequelize instance from the caller (lib/models.ts
// passes lib/db.ts db()), so nothing here imports lib/. A module-level record
// rather than a global: after a dev reload the classes are new objects and
// must be initialised again.
let definedOn: Sequelize | null = null;

/** Defines every model and association on `sequelize` (once per instance) and returns the models. */
export function defineModels(sequelize: Sequelize) {
  if (definedOn !== sequelize) {
    initModels(sequelize);
    definedOn = sequelize;
  }
  return {
    User,
    Workspace,
    Membership,
    Invitation,
    AuditEvent,
    LoginAttempt,
    Indicator,
    BoundarySet,
    BoundaryVersion,
    Panel,
    PanelVersion,
    ColumnMappingMemory,
    Upload,
    Run,
    ApiToken,
  };
}

/** What lib/models.ts models() returns. */
export type ModelRegistry = ReturnType<typeof defineModels>;

function initModels(sequelize: Sequelize): void {
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
      sessionVersion: { type: DataTypes.INTEGER, allowNull: false, defaultValue: 0 },
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
      device: { type: DataTypes.STRING(64), allowNull: true },
      at: { type: DataTypes.DATE, allowNull: false, defaultValue: DataTypes.NOW },
    },
    { ...common, tableName: "login_attempts", modelName: "LoginAttempt", timestamps: false },
  );

  // Intake (migrations/20261201000400-*).
  Indicator.init(
    {
      id: { type: DataTypes.INTEGER, autoIncrement: true, primaryKey: true },
      workspaceId: { type: DataTypes.INTEGER, allowNull: false },
      code: { type: DataTypes.STRING(120), allowNull: false },
      label: { type: DataTypes.STRING(200), allowNull: false },
      unit: { type: DataTypes.STRING(80), allowNull: true },
      description: { type: DataTypes.TEXT, allowNull: true },
      source: { type: DataTypes.STRING(400), allowNull: true },
      higherIsBetter: { type: DataTypes.BOOLEAN, allowNull: true },
      // migrations/20261212000100-indicator-rates
      rateEventsCode: { type: DataTypes.STRING(120), allowNull: true },
      ratePopulationCode: { type: DataTypes.STRING(120), allowNull: true },
      rateMultiplier: { type: DataTypes.INTEGER, allowNull: true },
      createdAt: DataTypes.DATE,
      updatedAt: DataTypes.DATE,
    },
    { ...common, tableName: "indicators", modelName: "Indicator" },
  );

  BoundarySet.init(
    {
      id: { type: DataTypes.INTEGER, autoIncrement: true, primaryKey: true },
      workspaceId: { type: DataTypes.INTEGER, allowNull: false },
      name: { type: DataTypes.STRING(200), allowNull: false },
      createdBy: { type: DataTypes.INTEGER, allowNull: true },
      createdAt: DataTypes.DATE,
      updatedAt: DataTypes.DATE,
    },
    { ...common, tableName: "boundary_sets", modelName: "BoundarySet" },
  );

  const versionState = {
    type: DataTypes.STRING(20),
    allowNull: false,
    defaultValue: "uploaded",
    validate: { isIn: [VERSION_STATES as unknown as string[]] },
  };
  // The uploaded file behind a version (boundaries or panel).
  const storedFile = {
    uploadId: { type: DataTypes.UUID, allowNull: true },
    s3Key: { type: DataTypes.STRING(512), allowNull: false },
    fileName: { type: DataTypes.STRING(255), allowNull: false },
    byteSize: { type: DataTypes.BIGINT, allowNull: false },
    sha256: { type: DataTypes.STRING(64), allowNull: false },
    // The version's own copy (lib/intake/version-files.ts); null on rows made before copies existed.
    fileKey: { type: DataTypes.STRING(512), allowNull: true },
  };
  const versionLifecycle = {
    report: { type: DataTypes.JSONB, allowNull: true },
    diff: { type: DataTypes.JSONB, allowNull: true },
    createdBy: { type: DataTypes.INTEGER, allowNull: true },
    validatedAt: { type: DataTypes.DATE, allowNull: true },
    publishedAt: { type: DataTypes.DATE, allowNull: true },
    archivedAt: { type: DataTypes.DATE, allowNull: true },
    createdAt: DataTypes.DATE,
    updatedAt: DataTypes.DATE,
  };

  BoundaryVersion.init(
    {
      id: { type: DataTypes.INTEGER, autoIncrement: true, primaryKey: true },
      boundarySetId: { type: DataTypes.INTEGER, allowNull: false },
      version: { type: DataTypes.INTEGER, allowNull: false },
      state: versionState,
      ...storedFile,
      format: { type: DataTypes.STRING(20), allowNull: false, validate: { isIn: [["topojson", "geojson"]] } },
      objectName: { type: DataTypes.STRING(200), allowNull: false },
      idProperty: { type: DataTypes.STRING(200), allowNull: false },
      nameProperty: { type: DataTypes.STRING(200), allowNull: true },
      regionCount: { type: DataTypes.INTEGER, allowNull: true },
      topologySha256: { type: DataTypes.STRING(64), allowNull: true },
      ...versionLifecycle,
    },
    { ...common, tableName: "boundary_versions", modelName: "BoundaryVersion" },
  );

  Panel.init(
    {
      id: { type: DataTypes.INTEGER, autoIncrement: true, primaryKey: true },
      workspaceId: { type: DataTypes.INTEGER, allowNull: false },
      name: { type: DataTypes.STRING(200), allowNull: false },
      boundarySetId: { type: DataTypes.INTEGER, allowNull: false },
      createdBy: { type: DataTypes.INTEGER, allowNull: true },
      createdAt: DataTypes.DATE,
      updatedAt: DataTypes.DATE,
    },
    { ...common, tableName: "panels", modelName: "Panel" },
  );

  PanelVersion.init(
    {
      id: { type: DataTypes.INTEGER, autoIncrement: true, primaryKey: true },
      panelId: { type: DataTypes.INTEGER, allowNull: false },
      version: { type: DataTypes.INTEGER, allowNull: false },
      state: versionState,
      ...storedFile,
      layout: { type: DataTypes.STRING(20), allowNull: false, validate: { isIn: [["long", "wide", "wide-period"]] } },
      decimalSeparator: { type: DataTypes.STRING(1), allowNull: false, defaultValue: "." },
      mapping: { type: DataTypes.JSONB, allowNull: false },
      boundaryVersionId: { type: DataTypes.INTEGER, allowNull: false },
      rowCount: { type: DataTypes.INTEGER, allowNull: true },
      sourcePanelVersionId: { type: DataTypes.INTEGER, allowNull: true },
      crosswalkId: { type: DataTypes.INTEGER, allowNull: true },
      harmonisation: { type: DataTypes.JSONB, allowNull: true },
      ...versionLifecycle,
    },
    { ...common, tableName: "panel_versions", modelName: "PanelVersion" },
  );

  ColumnMappingMemory.init(
    {
      id: { type: DataTypes.INTEGER, autoIncrement: true, primaryKey: true },
      workspaceId: { type: DataTypes.INTEGER, allowNull: false },
      headerSignature: { type: DataTypes.STRING(64), allowNull: false },
      layout: { type: DataTypes.STRING(20), allowNull: false },
      mapping: { type: DataTypes.JSONB, allowNull: false },
      createdAt: DataTypes.DATE,
      updatedAt: DataTypes.DATE,
    },
    { ...common, tableName: "column_mappings", modelName: "ColumnMappingMemory" },
  );

  Upload.init(
    {
      id: { type: DataTypes.UUID, defaultValue: DataTypes.UUIDV4, primaryKey: true },
      workspaceId: { type: DataTypes.INTEGER, allowNull: false },
      kind: { type: DataTypes.STRING(20), allowNull: false, validate: { isIn: [UPLOAD_KINDS as unknown as string[]] } },
      s3Key: { type: DataTypes.STRING(512), allowNull: false },
      fileName: { type: DataTypes.STRING(255), allowNull: false },
      declaredSize: { type: DataTypes.BIGINT, allowNull: false },
      contentType: { type: DataTypes.STRING(120), allowNull: false },
      sha256: { type: DataTypes.STRING(64), allowNull: false },
      state: {
        type: DataTypes.STRING(20),
        allowNull: false,
        defaultValue: "pending",
        validate: { isIn: [UPLOAD_STATES as unknown as string[]] },
      },
      error: { type: DataTypes.TEXT, allowNull: true },
      createdBy: { type: DataTypes.INTEGER, allowNull: true },
      expiresAt: { type: DataTypes.DATE, allowNull: false },
      createdAt: DataTypes.DATE,
      updatedAt: DataTypes.DATE,
    },
    { ...common, tableName: "uploads", modelName: "Upload" },
  );

  // migrations/20261214000100-create-api-tokens
  ApiToken.init(
    {
      id: { type: DataTypes.UUID, primaryKey: true },
      workspaceId: { type: DataTypes.INTEGER, allowNull: false },
      userId: { type: DataTypes.INTEGER, allowNull: false },
      name: { type: DataTypes.STRING(100), allowNull: false },
      role: { type: DataTypes.STRING(20), allowNull: false, validate: { isIn: [ROLES as unknown as string[]] } },
      secretHash: { type: DataTypes.CHAR(64), allowNull: false },
      expiresAt: { type: DataTypes.DATE, allowNull: false },
      lastUsedAt: { type: DataTypes.DATE, allowNull: true },
      lastAddress: { type: DataTypes.STRING(64), allowNull: true },
      seenAddresses: { type: DataTypes.ARRAY(DataTypes.STRING(64)), allowNull: false, defaultValue: [] },
      revokedAt: { type: DataTypes.DATE, allowNull: true },
      revokedBy: { type: DataTypes.INTEGER, allowNull: true },
      createdAt: DataTypes.DATE,
      updatedAt: DataTypes.DATE,
    },
    { ...common, tableName: "api_tokens", modelName: "ApiToken" },
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
  Workspace.hasMany(Indicator, { foreignKey: "workspaceId", as: "indicators" });
  Workspace.hasMany(BoundarySet, { foreignKey: "workspaceId", as: "boundarySets" });
  BoundarySet.hasMany(BoundaryVersion, { foreignKey: "boundarySetId", as: "versions" });
  BoundaryVersion.belongsTo(BoundarySet, { foreignKey: "boundarySetId", as: "boundarySet" });
  Workspace.hasMany(Panel, { foreignKey: "workspaceId", as: "panels" });
  Panel.belongsTo(BoundarySet, { foreignKey: "boundarySetId", as: "boundarySet" });
  Panel.hasMany(PanelVersion, { foreignKey: "panelId", as: "versions" });
  PanelVersion.belongsTo(Panel, { foreignKey: "panelId", as: "panel" });
  PanelVersion.belongsTo(BoundaryVersion, { foreignKey: "boundaryVersionId", as: "boundaryVersion" });

  Workspace.hasMany(ApiToken, { foreignKey: "workspaceId", as: "apiTokens" });
  ApiToken.belongsTo(User, { foreignKey: "userId", as: "owner" });

  initRunModel(sequelize);
}

export { AuditEvent, Invitation, LoginAttempt, Membership, User, Workspace };
export { BoundarySet, BoundaryVersion, ColumnMappingMemory, Indicator, Panel, PanelVersion, Upload };
export { Run, ApiToken };
export * from "./intake-types";
export * from "./digest-types";
export * from "./roles";
