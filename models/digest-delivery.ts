import { Model, type CreationOptional, type InferAttributes, type InferCreationAttributes } from "sequelize";
import type { DigestDeliveryStatus } from "./digest-types";

export class DigestDelivery extends Model<InferAttributes<DigestDelivery>, InferCreationAttributes<DigestDelivery>> {
  declare id: CreationOptional<number>;
  declare subscriptionId: number;
  declare idempotencyKey: string;
  declare runId: CreationOptional<number | null>;
  declare status: CreationOptional<DigestDeliveryStatus>;
  declare messageId: CreationOptional<string | null>;
  declare attempts: CreationOptional<number>;
  declare error: CreationOptional<string | null>;
  /** Why a skipped digest was not sent (migration 20261211000100). */
  declare skippedReason: CreationOptional<string | null>;
  /** The run whose results the digest reported. */
  declare coveredRunId: CreationOptional<number | null>;
  declare sentAt: CreationOptional<Date | null>;
  declare summary: CreationOptional<Record<string, unknown> | null>;
  declare createdAt: CreationOptional<Date>;
  declare updatedAt: CreationOptional<Date>;
}
