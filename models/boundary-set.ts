import { Model, type CreationOptional, type InferAttributes, type InferCreationAttributes } from "sequelize";

export class BoundarySet extends Model<InferAttributes<BoundarySet>, InferCreationAttributes<BoundarySet>> {
  declare id: CreationOptional<number>;
  declare workspaceId: number;
  declare name: string;
  declare createdBy: number | null;
  declare createdAt: CreationOptional<Date>;
  declare updatedAt: CreationOptional<Date>;
}
