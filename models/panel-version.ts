import { Model, type CreationOptional, type InferAttributes, type InferCreationAttributes } from "sequelize";
import type { VersionState, PanelLayoutName, DecimalSeparatorName, VersionDiff, HarmonisationProvenance } from "./intake-types";

export class PanelVersion extends Model<InferAttributes<PanelVersion>, InferCreationAttributes<PanelVersion>> {
  declare id: CreationOptional<number>;
  declare panelId: number;
  declare version: number;
  declare state: CreationOptional<VersionState>;
  declare uploadId: string | null;
  /** The version's own copy (fileKey) for versions made since copies exist; the upload's key on older rows. */
  declare s3Key: string;
  declare fileName: string;
  declare byteSize: number | string;
  /** SHA-256 of the source file as checked at upload; the version's own copy (fileKey) must still have it when read. */
  declare sha256: string;
  /** The version's own copy of its source file, under a key no presigned URL was issued for; null on rows made before copies existed. */
  declare fileKey: CreationOptional<string | null>;
  declare layout: PanelLayoutName;
  declare decimalSeparator: DecimalSeparatorName;
  /** A lib/intake ColumnMapping. */
  declare mapping: Record<string, unknown>;
  /** The boundary version whose region codes the panel was matched against. */
  declare boundaryVersionId: number;
  declare rowCount: number | null;
  /** For a harmonised version: the panel version it was made from, the crosswalk, and how (null for uploads). */
  declare sourcePanelVersionId: CreationOptional<number | null>;
  declare crosswalkId: CreationOptional<number | null>;
  declare harmonisation: CreationOptional<HarmonisationProvenance | null>;
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
