import { DataTypes, Model, type CreationOptional, type InferAttributes, type InferCreationAttributes, type Sequelize } from 'sequelize';

export type BacktestStatus = 'queued' | 'running' | 'succeeded' | 'failed' | 'cancelled';

/** A long replay or calibration of a rule, run by the scheduler; progress and result are stored as it goes. */
export class BacktestJob extends Model<InferAttributes<BacktestJob>, InferCreationAttributes<BacktestJob>> {
  declare id: CreationOptional<number>;
  declare ruleId: number;
  declare seriesId: number;
  declare kind: CreationOptional<'backtest' | 'calibration'>;
  declare status: CreationOptional<BacktestStatus>;
  declare progress: CreationOptional<number>;
  declare params: CreationOptional<Record<string, unknown>>;
  declare result: Record<string, unknown> | null;
  declare error: string | null;
  declare cancelRequested: CreationOptional<boolean>;
  declare createdBy: number | null;
  declare startedAt: Date | null;
  declare finishedAt: Date | null;
  declare createdAt: CreationOptional<Date>;
  declare updatedAt: CreationOptional<Date>;

  static initModel(sequelize: Sequelize): void {
    BacktestJob.init(
      {
        id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
        ruleId: { type: DataTypes.INTEGER, allowNull: false },
        seriesId: { type: DataTypes.INTEGER, allowNull: false },
        kind: { type: DataTypes.STRING, allowNull: false, defaultValue: 'backtest' },
        status: { type: DataTypes.STRING, allowNull: false, defaultValue: 'queued' },
        progress: { type: DataTypes.DOUBLE, allowNull: false, defaultValue: 0 },
        params: { type: DataTypes.JSON, allowNull: false, defaultValue: {} },
        result: { type: DataTypes.JSON, allowNull: true },
        error: { type: DataTypes.TEXT, allowNull: true },
        cancelRequested: { type: DataTypes.BOOLEAN, allowNull: false, defaultValue: false },
        createdBy: { type: DataTypes.INTEGER, allowNull: true },
        startedAt: { type: DataTypes.DATE, allowNull: true },
        finishedAt: { type: DataTypes.DATE, allowNull: true },
        createdAt: DataTypes.DATE,
        updatedAt: DataTypes.DATE,
      },
      { sequelize, tableName: 'backtest_jobs' },
    );
  }
}
