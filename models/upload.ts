import { Model, type CreationOptional, type InferAttributes, type InferCreationAttributes } from "sequelize";
import type { UploadKind, UploadState } from "./intake-types";

export class Upload extends Model<InferAttributes<Upload>, InferCreationAttributes<Upload>> {
  declare id: CreationOptional<string>;
  declare workspaceId: number;
  declare kind: UploadKind;
  declare s3Key: string;
  declare fileName: string;
  declare declaredSize: number | string;
  declare contentType: string;
  /** Client-declared SHA-256 (lowercase hex), checked against the stored object before it counts as received. */
  declare sha256: string;
  declare state: CreationOptional<UploadState>;
  declare error: string | null;
  declare createdBy: number | null;
  declare expiresAt: Date;
  declare createdAt: CreationOptional<Date>;
  declare updatedAt: CreationOptional<Date>;
}
