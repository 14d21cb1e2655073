import { Model, type CreationOptional, type InferAttributes, type InferCreationAttributes } from "sequelize";
import type { VersionState, BoundaryFormat, VersionDiff } from "./intake-types";

export class BoundaryVersion extends Model<InferAttributes<BoundaryVersion>, InferCreationAttributes<BoundaryVersion>> {
  declare id: CreationOptional<number>;
  declare boundarySetId: number;
  declare version: number;
  declare state: CreationOptional<VersionState>;
  declare uploadId: string | null;
  /** The stored TopoJSON (GeoJSON uploads are converted before they are stored under this key). */
  declare s3Key: string;
  declare fileName: string;
  /** BIGINT: pg returns it as a string. */
  declare byteSize: number | string;
  declare sha256: string;
  /** Format of the file as uploaded. */
  declare format: BoundaryFormat;
  declare objectName: string;
  declare idProperty: string;
  declare nameProperty: string | null;
  declare regionCount: number | null;
  declare report: Record<string, unknown> | null;
  declare diff: VersionDiff | null;
  declare createdBy: number | null;
  declare validatedAt: Date | null;
  declare publishedAt: Date | null;
  declare archivedAt: Date | null;
  declare createdAt: CreationOptional<Date>;
  declare updatedAt: CreationOptional<Date>;
}
