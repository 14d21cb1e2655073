import { DataTypes, Model, type CreationOptional, type InferAttributes, type InferCreationAttributes, type Sequelize } from "sequelize";

// Runs (migrations/20261201000500-create-runs.js). lib/runs reads and writes
// runs, their pieces (run_pieces) and results (run_results) with SQL; there
// are no models for the pieces and results. This one serves simple lookups by
// id (tests read a run's state through it).

/** A JSON value as the jsonb column holds it. */
export type JsonValue = string | number | boolean | null | JsonValue[] | { [key: string]: JsonValue };
/** runs.params as stored; lib/runs/schemas.ts (resolvedRunParamsSchema) says what it contains. */
export type RunParamsJson = { [key: string]: JsonValue };

export type RunStateName = "queued" | "running" | "completed" | "failed" | "cancelled";
export const RUN_STATES: readonly RunStateName[] = ["queued", "running", "completed", "failed", "cancelled"];

export class Run extends Model<InferAttributes<Run>, InferCreationAttributes<Run>> {
  declare id: CreationOptional<number>;
  declare workspaceId: number;
  /** Per-workspace run number, assigned by the database on insert (migration 20261211000400). */
  declare number: CreationOptional<number>;
  declare panelVersionId: number;
  declare boundaryVersionId: number;
  declare rerunOf: number | null;
  declare origin: CreationOptional<"user" | "rerun" | "demo" | "benchmark">;
  declare params: RunParamsJson;
  declare seed: number;
  declare state: CreationOptional<RunStateName>;
  declare progress: CreationOptional<number>;
  declare piecesTotal: number;
  declare piecesDone: CreationOptional<number>;
  declare resultsTotal: number;
  declare significanceBasis: string | null;
  declare error: string | null;
  declare createdBy: number | null;
  declare cancelledBy: number | null;
  declare startedAt: Date | null;
  declare finishedAt: Date | null;
  declare createdAt: CreationOptional<Date>;
  declare updatedAt: CreationOptional<Date>;
}

/** Called once per Sequelize instance from models/index.ts defineModels(). */
export function initRunModel(sequelize: Sequelize): void {
  const common = { sequelize, underscored: true };
  const state = { type: DataTypes.STRING(20), allowNull: false, defaultValue: "queued", validate: { isIn: [RUN_STATES as unknown as string[]] } };
  Run.init(
    {
      id: { type: DataTypes.INTEGER, autoIncrement: true, primaryKey: true },
      workspaceId: { type: DataTypes.INTEGER, allowNull: false },
      // The insert trigger fills it; allowNull here only lets an insert leave it out.
      number: { type: DataTypes.INTEGER, allowNull: true },
      panelVersionId: { type: DataTypes.INTEGER, allowNull: false },
      boundaryVersionId: { type: DataTypes.INTEGER, allowNull: false },
      rerunOf: { type: DataTypes.INTEGER, allowNull: true },
      origin: { type: DataTypes.STRING(20), allowNull: false, defaultValue: "user" },
      params: { type: DataTypes.JSONB, allowNull: false },
      seed: { type: DataTypes.INTEGER, allowNull: false },
      state,
      progress: { type: DataTypes.DOUBLE, allowNull: false, defaultValue: 0 },
      piecesTotal: { type: DataTypes.INTEGER, allowNull: false },
      piecesDone: { type: DataTypes.INTEGER, allowNull: false, defaultValue: 0 },
      resultsTotal: { type: DataTypes.INTEGER, allowNull: false },
      significanceBasis: { type: DataTypes.TEXT, allowNull: true },
      error: { type: DataTypes.TEXT, allowNull: true },
      createdBy: { type: DataTypes.INTEGER, allowNull: true },
      cancelledBy: { type: DataTypes.INTEGER, allowNull: true },
      startedAt: { type: DataTypes.DATE, allowNull: true },
      finishedAt: { type: DataTypes.DATE, allowNull: true },
      createdAt: DataTypes.DATE,
      updatedAt: DataTypes.DATE,
    },
    { ...common, tableName: "runs", modelName: "Run" },
  );
}
