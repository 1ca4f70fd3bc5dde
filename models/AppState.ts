import { DataTypes, Model, type InferAttributes, type InferCreationAttributes, type Sequelize } from 'sequelize';

/** Small process-wide facts shared through the database: the seed marker, the scheduler's heartbeat. */
export class AppState extends Model<InferAttributes<AppState>, InferCreationAttributes<AppState>> {
  declare key: string;
  declare value: string;
  declare updatedAt: Date;

  static initModel(sequelize: Sequelize): void {
    AppState.init(
      {
        key: { type: DataTypes.STRING, primaryKey: true },
        value: { type: DataTypes.TEXT, allowNull: false },
        updatedAt: { type: DataTypes.DATE, allowNull: false },
      },
      { sequelize, tableName: 'app_state', createdAt: false },
    );
  }
}
