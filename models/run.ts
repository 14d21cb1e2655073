import { DataTypes, Model, type CreationOptional, type InferAttributes, type InferCreationAttributes, type Sequelize } from "sequelize";
import type { ResolvedRunParams } from "@/lib/runs/schemas";

// Runs, their pieces and results (migrations/20261201000500-create-runs.js).
// Bulk writes and the catalogue's reads go through lib/runs/store.ts and
// queries.ts with SQL; these models serve simple lookups and associations.

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
  declare params: ResolvedRunParams;
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

export class RunPiece extends Model<InferAttributes<RunPiece>, InferCreationAttributes<RunPiece>> {
  declare id: CreationOptional<number>;
  declare runId: number;
  declare indicatorCode: string;
  declare state: CreationOptional<RunStateName>;
  declare attempts: CreationOptional<number>;
  declare periodsTotal: number;
  declare periodsDone: CreationOptional<number>;
  declare jobId: string | null;
  declare error: string | null;
  declare startedAt: Date | null;
  declare finishedAt: Date | null;
  declare createdAt: CreationOptional<Date>;
  declare updatedAt: CreationOptional<Date>;
}

/** One indicator × period of a run; the statistics' columns are read through lib/runs/queries.ts. */
export class RunResult extends Model<InferAttributes<RunResult>, InferCreationAttributes<RunResult>> {
  declare id: CreationOptional<string>;
  declare runId: number;
  declare indicatorCode: string;
  declare periodKey: string;
  declare periodIndex: number;
  declare status: "computed" | "not-computed";
  declare note: string | null;
  declare n: number;
  declare i: number | null;
  declare significance: "clustering" | "dispersion" | "not-significant" | null;
  declare createdAt: CreationOptional<Date>;
}

/** Called once from models/index.ts initModels(). */
export function initRunModels(sequelize: Sequelize): void {
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
  RunPiece.init(
    {
      id: { type: DataTypes.INTEGER, autoIncrement: true, primaryKey: true },
      runId: { type: DataTypes.INTEGER, allowNull: false },
      indicatorCode: { type: DataTypes.STRING(120), allowNull: false },
      state,
      attempts: { type: DataTypes.INTEGER, allowNull: false, defaultValue: 0 },
      periodsTotal: { type: DataTypes.INTEGER, allowNull: false },
      periodsDone: { type: DataTypes.INTEGER, allowNull: false, defaultValue: 0 },
      jobId: { type: DataTypes.STRING(64), allowNull: true },
      error: { type: DataTypes.TEXT, allowNull: true },
      startedAt: { type: DataTypes.DATE, allowNull: true },
      finishedAt: { type: DataTypes.DATE, allowNull: true },
      createdAt: DataTypes.DATE,
      updatedAt: DataTypes.DATE,
    },
    { ...common, tableName: "run_pieces", modelName: "RunPiece" },
  );
  RunResult.init(
    {
      id: { type: DataTypes.BIGINT, autoIncrement: true, primaryKey: true },
      runId: { type: DataTypes.INTEGER, allowNull: false },
      indicatorCode: { type: DataTypes.STRING(120), allowNull: false },
      periodKey: { type: DataTypes.STRING(120), allowNull: false },
      periodIndex: { type: DataTypes.INTEGER, allowNull: false },
      status: { type: DataTypes.STRING(20), allowNull: false },
      note: { type: DataTypes.TEXT, allowNull: true },
      n: { type: DataTypes.INTEGER, allowNull: false },
      i: { type: DataTypes.DOUBLE, allowNull: true },
      significance: { type: DataTypes.STRING(20), allowNull: true },
      createdAt: DataTypes.DATE,
    },
    { ...common, tableName: "run_results", modelName: "RunResult", updatedAt: false },
  );
  Run.hasMany(RunPiece, { foreignKey: "runId", as: "pieces" });
  RunPiece.belongsTo(Run, { foreignKey: "runId", as: "run" });
  Run.hasMany(RunResult, { foreignKey: "runId", as: "results" });
  RunResult.belongsTo(Run, { foreignKey: "runId", as: "run" });
}
