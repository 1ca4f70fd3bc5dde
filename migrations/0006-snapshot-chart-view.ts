import { DataTypes, type QueryInterface } from 'sequelize';

/**
 * The chart view of a snapshot (its curves thinned to chart resolution), written with the snapshot, so a series
 * page reads a few tens of kB instead of parsing the full curves on every first view. Snapshots stored before
 * this column have none and are drawn from their curves as before.
 */
export async function up({ context: q }: { context: QueryInterface }): Promise<void> {
  await q.addColumn('analysis_snapshots', 'chart_view', { type: DataTypes.JSON, allowNull: true });
}

export async function down({ context: q }: { context: QueryInterface }): Promise<void> {
  await q.removeColumn('analysis_snapshots', 'chart_view');
}
