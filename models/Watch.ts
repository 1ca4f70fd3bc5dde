import { DataTypes, Model, type CreationOptional, type InferAttributes, type InferCreationAttributes, type Sequelize } from 'sequelize';

export const WATCH_MODES = ['immediate', 'digest', 'none'] as const;
export type WatchMode = (typeof WATCH_MODES)[number];

/** A user's mail preference for one series. */
export class Watch extends Model<InferAttributes<Watch>, InferCreationAttributes<Watch>> {
  declare id: CreationOptional<number>;
  declare userId: number;
  declare seriesId: number;
  declare mode: WatchMode;
  declare createdAt: CreationOptional<Date>;
  declare updatedAt: CreationOptional<Date>;

  static initModel(sequelize: Sequelize): void {
    Watch.init(
      {
        id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
        userId: { type: DataTypes.INTEGER, allowNull: false },
        seriesId: { type: DataTypes.INTEGER, allowNull: false },
        mode: { type: DataTypes.STRING, allowNull: false, validate: { isIn: [[...WATCH_MODES]] } },
        createdAt: DataTypes.DATE,
        updatedAt: DataTypes.DATE,
      },
      { sequelize, tableName: 'watches' },
    );
  }
}
