import { Model, type CreationOptional, type InferAttributes, type InferCreationAttributes } from "sequelize";

export class User extends Model<InferAttributes<User>, InferCreationAttributes<User>> {
  declare id: CreationOptional<number>;
  declare email: string;
  declare name: string;
  declare passwordHash: string;
  /** Raised to end every session issued before (lib/auth/session-version.ts). */
  declare sessionVersion: CreationOptional<number>;
  declare createdAt: CreationOptional<Date>;
  declare updatedAt: CreationOptional<Date>;
}

/** Lowercased and trimmed: the one spelling of an address used for lookups and uniqueness. */
export function normaliseEmail(email: string): string {
  return email.trim().toLowerCase();
}
