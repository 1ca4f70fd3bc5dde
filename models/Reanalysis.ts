import type { SnapshotProvenance } from '@/lib/analysis/provenance-record';
import { DataTypes, Model, type CreationOptional, type InferAttributes, type InferCreationAttributes, type Sequelize } from 'sequelize';

/**
 * An analysis of a series on a chosen data version (migration 0021): the engine's summary with the settings and
 * marks of the moment it was asked for, on the values the series held at that version. Kept apart from the live
 * snapshots, so rules never judge it and it never becomes a series' latest evidence.
 */
export class Reanalysis extends Model<InferAttributes<Reanalysis>, InferCreationAttributes<Reanalysis>> {
  declare id: CreationOptional<number>;
  declare seriesId: number;
  declare dataVersion: number;
  declare settings: Record<string, unknown>;
  /** the same summary a snapshot keeps (`snapshotSummary`): taus, surrogate p values, stretch, shifts */
  declare summary: Record<string, unknown>;
  declare status: 'ok' | 'error';
  declare error: string | null;
  declare n: CreationOptional<number>;
  declare dataFrom: number | null;
  declare dataTo: number | null;
  declare durationMs: number | null;
  declare provenance: SnapshotProvenance;
  declare requestedBy: number | null;
  declare createdAt: CreationOptional<Date>;
  declare updatedAt: CreationOptional<Date>;

  static initModel(sequelize: Sequelize): void {
    Reanalysis.init(
      {
        id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
        seriesId: { type: DataTypes.INTEGER, allowNull: false },
        dataVersion: { type: DataTypes.INTEGER, allowNull: false },
        settings: { type: DataTypes.JSON, allowNull: false },
        summary: { type: DataTypes.JSON, allowNull: false },
        status: { type: DataTypes.STRING, allowNull: false },
        error: { type: DataTypes.TEXT, allowNull: true },
        n: { type: DataTypes.INTEGER, allowNull: false, defaultValue: 0 },
        dataFrom: { type: DataTypes.BIGINT, allowNull: true },
        dataTo: { type: DataTypes.BIGINT, allowNull: true },
        durationMs: { type: DataTypes.INTEGER, allowNull: true },
        provenance: { type: DataTypes.JSON, allowNull: false },
        requestedBy: { type: DataTypes.INTEGER, allowNull: true },
        createdAt: DataTypes.DATE,
        updatedAt: DataTypes.DATE,
      },
      { sequelize, tableName: 'reanalyses' },
    );
  }
}
