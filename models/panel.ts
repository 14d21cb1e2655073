import { Model, type CreationOptional, type InferAttributes, type InferCreationAttributes } from "sequelize";

export class Panel extends Model<InferAttributes<Panel>, InferCreationAttributes<Panel>> {
  declare id: CreationOptional<number>;
  declare workspaceId: number;
  declare name: string;
  declare boundarySetId: number;
  declare createdBy: number | null;
  declare createdAt: CreationOptional<Date>;
  declare updatedAt: CreationOptional<Date>;
}
