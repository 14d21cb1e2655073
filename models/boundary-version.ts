import { Model, type CreationOptional, type InferAttributes, type InferCreationAttributes } from "sequelize";
import type { VersionState, BoundaryFormat, VersionDiff } from "./intake-types";

export class BoundaryVersion extends Model<InferAttributes<BoundaryVersion>, InferCreationAttributes<BoundaryVersion>> {
  declare id: CreationOptional<number>;
  declare boundarySetId: number;
  declare version: number;
  declare state: CreationOptional<VersionState>;
  declare uploadId: string | null;
  /** What maps and runs read: the version's own copy (fileKey) of a TopoJSON file, or the TopoJSON converted from a GeoJSON one beside it. */
  declare s3Key: string;
  declare fileName: string;
  /** BIGINT: pg returns it as a string. */
  declare byteSize: number | string;
  /** SHA-256 of the source file as checked at upload; the version's own copy (fileKey) must still have it when read. */
  declare sha256: string;
  /** The version's own copy of its source file, under a key no presigned URL was issued for; null on rows made before copies existed. */
  declare fileKey: CreationOptional<string | null>;
  /** Format of the file as uploaded. */
  declare format: BoundaryFormat;
  declare objectName: string;
  declare idProperty: string;
  declare nameProperty: string | null;
  declare regionCount: number | null;
  /** SHA-256 of the TopoJSON at s3Key, set by validation; null on rows made before it was recorded. */
  declare topologySha256: CreationOptional<string | null>;
  declare report: Record<string, unknown> | null;
  declare diff: VersionDiff | null;
  declare createdBy: number | null;
  declare validatedAt: Date | null;
  declare publishedAt: Date | null;
  declare archivedAt: Date | null;
  declare createdAt: CreationOptional<Date>;
  declare updatedAt: CreationOptional<Date>;
}
