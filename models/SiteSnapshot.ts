import { DataTypes, Model, type CreationOptional, type InferAttributes, type InferCreationAttributes, type Sequelize } from 'sequelize';
import type { SiteAnalysisSummary, SiteCurves, SiteMember } from '@/lib/sites/analysis-shape';
import type { SiteGrid, SiteSnapshotProvenance } from '@/lib/sites/provenance-record';

/** The site-level indicators of a site's series at one moment (lib/sites/analysis.ts; migration 0022). */
export class SiteSnapshot extends Model<InferAttributes<SiteSnapshot>, InferCreationAttributes<SiteSnapshot>> {
  declare id: CreationOptional<number>;
  declare siteId: number;
  /** each member series with its latest analysis snapshot id when this was made ("seriesId:snapshotId,…") */
  declare basis: string;
  declare settings: Record<string, unknown>;
  /** the series analysed together, in column order, and those left out with the reason */
  declare members: { used: SiteMember[]; leftOut: (SiteMember & { reason: string })[] };
  /** empty for a failed computation */
  declare summary: SiteAnalysisSummary | Record<string, never>;
  declare curves: SiteCurves | null;
  /** the common grid analysed (migration 0025); null for a failed computation and for snapshots stored before */
  declare grid: SiteGrid | null;
  declare provenance: SiteSnapshotProvenance | null;
  declare status: CreationOptional<'ok' | 'error'>;
  declare error: string | null;
  declare n: CreationOptional<number>;
  declare dataFrom: number | null;
  declare dataTo: number | null;
  declare durationMs: number | null;
  declare createdAt: CreationOptional<Date>;
  declare updatedAt: CreationOptional<Date>;

  static initModel(sequelize: Sequelize): void {
    const epoch = (name: 'dataFrom' | 'dataTo') => ({
      type: DataTypes.BIGINT,
      allowNull: true,
      get(this: SiteSnapshot) {
        const v = this.getDataValue(name);
        return v === null || v === undefined ? null : Number(v);
      },
    });
    SiteSnapshot.init(
      {
        id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
        siteId: { type: DataTypes.INTEGER, allowNull: false },
        basis: { type: DataTypes.TEXT, allowNull: false },
        settings: { type: DataTypes.JSON, allowNull: false },
        members: { type: DataTypes.JSON, allowNull: false },
        summary: { type: DataTypes.JSON, allowNull: false },
        curves: { type: DataTypes.JSON, allowNull: true },
        grid: { type: DataTypes.JSON, allowNull: true },
        provenance: { type: DataTypes.JSON, allowNull: true },
        status: { type: DataTypes.STRING, allowNull: false, defaultValue: 'ok' },
        error: { type: DataTypes.TEXT, allowNull: true },
        n: { type: DataTypes.INTEGER, allowNull: false, defaultValue: 0 },
        dataFrom: epoch('dataFrom'),
        dataTo: epoch('dataTo'),
        durationMs: { type: DataTypes.INTEGER, allowNull: true },
        createdAt: DataTypes.DATE,
        updatedAt: DataTypes.DATE,
      },
      { sequelize, tableName: 'site_snapshots' },
    );
  }
}
