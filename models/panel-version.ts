import { Model, type CreationOptional, type InferAttributes, type InferCreationAttributes } from "sequelize";
import type { VersionState, PanelLayoutName, DecimalSeparatorName, VersionDiff } from "./intake-types";

export class PanelVersion extends Model<InferAttributes<PanelVersion>, InferCreationAttributes<PanelVersion>> {
  declare id: CreationOptional<number>;
  declare panelId: number;
  declare version: number;
  declare state: CreationOptional<VersionState>;
  declare uploadId: string | null;
  declare s3Key: string;
  declare fileName: string;
  declare byteSize: number | string;
  declare sha256: string;
  declare layout: PanelLayoutName;
  declare decimalSeparator: DecimalSeparatorName;
  /** A lib/intake ColumnMapping. */
  declare mapping: Record<string, unknown>;
  /** The boundary version whose region codes the panel was matched against. */
  declare boundaryVersionId: number;
  declare rowCount: number | null;
  /** A lib/intake PanelReport (plus `stage` on a rejection outside the validator). */
  declare report: Record<string, unknown> | null;
  declare diff: VersionDiff | null;
  declare createdBy: number | null;
  declare validatedAt: Date | null;
  declare publishedAt: Date | null;
  declare archivedAt: Date | null;
  declare createdAt: CreationOptional<Date>;
  declare updatedAt: CreationOptional<Date>;
}
