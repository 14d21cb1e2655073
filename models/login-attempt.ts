import { Model, type CreationOptional, type InferAttributes, type InferCreationAttributes } from "sequelize";

export class LoginAttempt extends Model<InferAttributes<LoginAttempt>, InferCreationAttributes<LoginAttempt>> {
  declare id: CreationOptional<string>;
  declare email: string;
  declare ip: string;
  declare succeeded: boolean;
  declare at: CreationOptional<Date>;
}
