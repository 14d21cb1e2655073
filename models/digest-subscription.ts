import { Model, type CreationOptional, type InferAttributes, type InferCreationAttributes } from "sequelize";
import type { DigestCadence, DigestEmptyPolicy, DigestScope, DigestThreshold } from "./digest-types";

export class DigestSubscription extends Model<InferAttributes<DigestSubscription>, InferCreationAttributes<DigestSubscription>> {
  declare id: CreationOptional<number>;
  declare userId: number;
  declare workspaceId: number;
  declare cadence: CreationOptional<DigestCadence>;
  declare scope: CreationOptional<DigestScope>;
  declare indicatorCodes: CreationOptional<string[]>;
  declare threshold: CreationOptional<DigestThreshold>;
  declare emptyPolicy: CreationOptional<DigestEmptyPolicy>;
  declare active: CreationOptional<boolean>;
  declare unsubscribedAt: CreationOptional<Date | null>;
  declare lastDigestAt: CreationOptional<Date | null>;
  declare lastRunId: CreationOptional<number | null>;
  declare createdAt: CreationOptional<Date>;
  declare updatedAt: CreationOptional<Date>;
}
