import { DataTypes, Model, type InferAttributes, type InferCreationAttributes, type Sequelize } from 'sequelize';

/** One measured value at a UTC instant (integer milliseconds); at most one per series and instant. */
export class Observation extends Model<InferAttributes<Observation>, InferCreationAttributes<Observation>> {
  declare seriesId: number;
  declare t: number;
  declare value: number;
  /** the ingest run that last wrote this row; null for seeded rows and rows stored before runs were recorded */
  declare ingestRunId?: number | null;
  /** QARTOD flag: 1 pass, 2 not evaluated, 3 suspect, 4 fail, 9 missing (lib/quality/flags.ts) */
  declare flag?: number;
  /** which test set the flag, 'source' for the file's own flag, 'analyst' for an override */
  declare flagTest?: string | null;
  /** the flag the source file carried, kept so re-running the tests can combine it again */
  declare sourceFlag?: number | null;

  static initModel(sequelize: Sequelize): void {
    Observation.init(
      {
        seriesId: { type: DataTypes.INTEGER, allowNull: false, primaryKey: true },
        t: { type: DataTypes.BIGINT, allowNull: false, primaryKey: true },
        value: { type: DataTypes.DOUBLE, allowNull: false },
        ingestRunId: { type: DataTypes.INTEGER, allowNull: true },
        flag: { type: DataTypes.INTEGER, allowNull: false, defaultValue: 2 },
        flagTest: { type: DataTypes.STRING(32), allowNull: true },
        sourceFlag: { type: DataTypes.INTEGER, allowNull: true },
      },
      { sequelize, tableName: 'observations', timestamps: false },
    );
  }
}
