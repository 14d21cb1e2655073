import { Model, type CreationOptional, type InferAttributes, type InferCreationAttributes } from "sequelize";
import type { Role } from "./roles";

/** A personal API token (migrations/20261214000100-create-api-tokens); the secret itself is never stored. */
export class ApiToken extends Model<InferAttributes<ApiToken>, InferCreationAttributes<ApiToken>> {
  /** Random UUID; its 32 hex digits are the token's visible id (`tsr_<id>_<secret>`). */
  declare id: string;
  declare workspaceId: number;
  declare userId: number;
  declare name: string;
  /** The most the token may do; the owner's current role caps it at every use. */
  declare role: Role;
  /** SHA-256 (hex) of the secret part. */
  declare secretHash: string;
  declare expiresAt: Date;
  declare lastUsedAt: CreationOptional<Date | null>;
  declare lastAddress: CreationOptional<string | null>;
  declare seenAddresses: CreationOptional<string[]>;
  declare revokedAt: CreationOptional<Date | null>;
  declare revokedBy: CreationOptional<number | null>;
  declare createdAt: CreationOptional<Date>;
  declare updatedAt: CreationOptional<Date>;
}
