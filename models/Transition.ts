import { DataTypes, Model, type CreationOptional, type InferAttributes, type InferCreationAttributes, type Sequelize } from 'sequelize';

/** An instant a lead marked as a known transition in a series' record (the ground truth for backtests). */
export class Transition extends Model<InferAttributes<Transition>, InferCreationAttributes<Transition>> {
  declare id: CreationOptional<number>;
  declare seriesId: number;
  declare at: number;
  declare note: CreationOptional<string>;
  declare createdBy: number | null;
  declare createdAt: CreationOptional<Date>;
  declare updatedAt: CreationOptional<Date>;

  static initModel(sequelize: Sequelize): void {
    Transition.init(
      {
        id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
        seriesId: { type: DataTypes.INTEGER, allowNull: false },
        at: { type: DataTypes.BIGINT, allowNull: false },
        note: { type: DataTypes.TEXT, allowNull: false, defaultValue: '' },
        createdBy: { type: DataTypes.INTEGER, allowNull: true },
        createdAt: DataTypes.DATE,
        updatedAt: DataTypes.DATE,
      },
      { sequelize, tableName: 'transitions' },
    );
  }
}
