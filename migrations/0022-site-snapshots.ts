import { DataTypes, type QueryInterface } from 'sequelize';

/**
 * Site-level snapshots: the site indicators (lib/engine/site.ts) over a site's active series on one grid, computed
 * by the scheduler after its member series are analysed (lib/sites/analysis.ts), one row per computation.
 * `basis` names each member series with its latest analysis snapshot when the row was made, so a site is analysed
 * again exactly when a member gets a new snapshot (new data, new settings) or the member set changes.
 */
export async function up({ context: q }: { context: QueryInterface }): Promise<void> {
  await q.createTable('site_snapshots', {
    id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
    site_id: { type: DataTypes.INTEGER, allowNull: false, references: { model: 'sites', key: 'id' }, onDelete: 'CASCADE' },
    basis: { type: DataTypes.TEXT, allowNull: false },
    settings: { type: DataTypes.JSON, allowNull: false },
    members: { type: DataTypes.JSON, allowNull: false },
    summary: { type: DataTypes.JSON, allowNull: false },
    curves: { type: DataTypes.JSON, allowNull: true },
    status: { type: DataTypes.STRING, allowNull: false, defaultValue: 'ok' },
    error: { type: DataTypes.TEXT, allowNull: true },
    n: { type: DataTypes.INTEGER, allowNull: false, defaultValue: 0 },
    data_from: { type: DataTypes.BIGINT, allowNull: true },
    data_to: { type: DataTypes.BIGINT, allowNull: true },
    duration_ms: { type: DataTypes.INTEGER, allowNull: true },
    created_at: { type: DataTypes.DATE, allowNull: false },
    updated_at: { type: DataTypes.DATE, allowNull: false },
  });
  await q.addIndex('site_snapshots', ['site_id', 'id']);
}

export async function down({ context: q }: { context: QueryInterface }): Promise<void> {
  await q.sequelize.query('DROP TABLE site_snapshots');
}
