import { Model, type CreationOptional, type InferAttributes, type InferCreationAttributes } from "sequelize";

export class Indicator extends Model<InferAttributes<Indicator>, InferCreationAttributes<Indicator>> {
  declare id: CreationOptional<number>;
  declare workspaceId: number;
  declare code: string;
  declare label: string;
  declare unit: string | null;
  declare description: string | null;
  declare source: string | null;
  declare higherIsBetter: boolean | null;
  /** Set (all three) when the indicator is a rate: events / population × multiplier. */
  declare rateEventsCode: CreationOptional<string | null>;
  declare ratePopulationCode: CreationOptional<string | null>;
  declare rateMultiplier: CreationOptional<number | null>;
  declare createdAt: CreationOptional<Date>;
  declare updatedAt: CreationOptional<Date>;
}
