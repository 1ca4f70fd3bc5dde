import { DataTypes, Model, type InferAttributes, type InferCreationAttributes, type Sequelize } from 'sequelize';

/** One measured value at a UTC instant (integer milliseconds); at most one per series and instant. */
export class Observation extends Model<InferAttributes<Observation>, InferCreationAttributes<Observation>> {
  declare seriesId: number;
  declare t: number;
  declare value: number;

  static initModel(sequelize: Sequelize): void {
    Observation.init(
      {
        seriesId: { type: DataTypes.INTEGER, allowNull: false, primaryKey: true },
        t: { type: DataTypes.BIGINT, allowNull: false, primaryKey: true },
        value: { type: DataTypes.DOUBLE, allowNull: false },
      },
      { sequelize, tableName: 'observations', timestamps: false },
    );
  }
}
