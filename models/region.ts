import { Model, type CreationOptional, type InferAttributes, type InferCreationAttributes } from "sequelize";

export class Region extends Model<InferAttributes<Region>, InferCreationAttributes<Region>> {
  declare id: CreationOptional<number>;
  declare boundaryVersionId: number;
  declare code: string;
  declare name: string | null;
  declare attributes: CreationOptional<Record<string, unknown>>;
}
