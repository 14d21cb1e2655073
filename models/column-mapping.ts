import { Model, type CreationOptional, type InferAttributes, type InferCreationAttributes } from "sequelize";
import type { PanelLayoutName } from "./intake-types";

export class ColumnMappingMemory extends Model<InferAttributes<ColumnMappingMemory>, InferCreationAttributes<ColumnMappingMemory>> {
  declare id: CreationOptional<number>;
  declare workspaceId: number;
  /** sha256 hex of the normalised header (see lib/intake/service.ts headerSignature). */
  declare headerSignature: string;
  declare layout: PanelLayoutName;
  declare mapping: Record<string, unknown>;
  declare createdAt: CreationOptional<Date>;
  declare updatedAt: CreationOptional<Date>;
}
