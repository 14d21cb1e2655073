import { Model, type CreationOptional, type InferAttributes, type InferCreationAttributes } from "sequelize";

export class LoginAttempt extends Model<InferAttributes<LoginAttempt>, InferCreationAttributes<LoginAttempt>> {
  declare id: CreationOptional<string>;
  declare email: string;
  declare ip: string;
  declare succeeded: boolean;
  /** The device cookie's nonce for a trusted client; null for an untrusted one. */
  declare device: CreationOptional<string | null>;
  declare at: CreationOptional<Date>;
}
