import type { SnapshotProvenance } from '@/lib/analysis/provenance-record';
import { DataTypes, Model, type CreationOptional, type InferAttributes, type InferCreationAttributes, type Sequelize } from 'sequelize';

/**
 * Attributes for reads that need a snapshot's numbers but draw nothing: its two large columns (the curves,
 * hundreds of kB, and the chart view, tens of kB) are left in the database.
 */
export const WITHOUT_CHARTS = { exclude: ['curves', 'chartView'] };

/** The engine's result for a series at one moment, with the settings that produced it. */
export class AnalysisSnapshot extends Model<InferAttributes<AnalysisSnapshot>, InferCreationAttributes<AnalysisSnapshot>> {
  declare id: CreationOptional<number>;
  declare seriesId: number;
  declare settings: Record<string, unknown>;
  /** `summarizeAnalysis` output: n, windowPoints, kendall, significance, quality. */
  declare summary: Record<string, unknown>;
  /** Per-point curves (possibly thinned for storage) so charts can show the evidence as it was. */
  declare curves: Record<string, unknown> | null;
  /** The curves as a chart draws them (an `AnalysisView`), saved with the snapshot; null on older snapshots. */
  declare chartView: CreationOptional<Record<string, unknown> | null>;
  declare status: CreationOptional<'ok' | 'error'>;
  declare error: string | null;
  declare n: CreationOptional<number>;
  declare dataFrom: number | null;
  declare dataTo: number | null;
  declare durationMs: number | null;
  /** where the numbers came from (lib/analysis/provenance.ts); null on snapshots stored before migration 0012 */
  declare provenance: CreationOptional<SnapshotProvenance | null>;
  declare createdAt: CreationOptional<Date>;
  declare updatedAt: CreationOptional<Date>;

  static initModel(sequelize: Sequelize): void {
    AnalysisSnapshot.init(
      {
        id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
        seriesId: { type: DataTypes.INTEGER, allowNull: false },
        settings: { type: DataTypes.JSON, allowNull: false },
        summary: { type: DataTypes.JSON, allowNull: false },
        curves: { type: DataTypes.JSON, allowNull: true },
        chartView: { type: DataTypes.JSON, allowNull: true },
        status: { type: DataTypes.STRING, allowNull: false, defaultValue: 'ok' },
        error: { type: DataTypes.TEXT, allowNull: true },
        n: { type: DataTypes.INTEGER, allowNull: false, defaultValue: 0 },
        dataFrom: { type: DataTypes.BIGINT, allowNull: true },
        dataTo: { type: DataTypes.BIGINT, allowNull: true },
        durationMs: { type: DataTypes.INTEGER, allowNull: true },
        provenance: { type: DataTypes.JSON, allowNull: true },
        createdAt: DataTypes.DATE,
        updatedAt: DataTypes.DATE,
      },
      { sequelize, tableName: 'analysis_snapshots' },
    );
  }
}
