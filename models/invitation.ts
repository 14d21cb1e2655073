import { Model, type CreationOptional, type InferAttributes, type InferCreationAttributes } from "sequelize";
import type { Role } from "./roles";

export class Invitation extends Model<InferAttributes<Invitation>, InferCreationAttributes<Invitation>> {
  declare id: CreationOptional<number>;
  declare workspaceId: number;
  declare email: string;
  declare role: Role;
  /** SHA-256 of the token sent by e-mail; the token itself is never stored. */
  declare tokenHash: string;
  declare expiresAt: Date;
  declare acceptedAt: CreationOptional<Date | null>;
  declare acceptedBy: CreationOptional<number | null>;
  declare revokedAt: CreationOptional<Date | null>;
  declare invitedBy: number | null;
  declare createdAt: CreationOptional<Date>;
  declare updatedAt: CreationOptional<Date>;
}
