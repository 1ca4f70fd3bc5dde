import { DataTypes, Model, type CreationOptional, type InferAttributes, type InferCreationAttributes, type Sequelize } from 'sequelize';

/** The state a series' next analysis may continue from (migration 0023; packed by lib/analysis/state.ts). */
export class SeriesAnalysisState extends Model<InferAttributes<SeriesAnalysisState>, InferCreationAttributes<SeriesAnalysisState>> {
  declare seriesId: number;
  /** the snapshot whose analysis left this state */
  declare snapshotId: number;
  declare state: Buffer;
  declare createdAt: CreationOptional<Date>;
  declare updatedAt: CreationOptional<Date>;

  static initModel(sequelize: Sequelize): void {
    SeriesAnalysisState.init(
      {
        seriesId: { type: DataTypes.INTEGER, primaryKey: true },
        snapshotId: { type: DataTypes.INTEGER, allowNull: false },
        state: { type: DataTypes.BLOB, allowNull: false },
        createdAt: DataTypes.DATE,
        updatedAt: DataTypes.DATE,
      },
      { sequelize, tableName: 'analysis_states' },
    );
  }
}
