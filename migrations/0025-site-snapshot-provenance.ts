import { DataTypes, type QueryInterface } from 'sequelize';

/**
 * What a site snapshot needs to be re-derived by a reviewer (lib/sites/provenance.ts): `grid`, the common grid it
 * analysed (instants and one column of values per member series), and `provenance`, its hash in a documented
 * canonical form with the member analyses, data versions, engine version and seed. Null on snapshots stored before.
 */
export async function up({ context: q }: { context: QueryInterface }): Promise<void> {
  await q.addColumn('site_snapshots', 'grid', { type: DataTypes.JSON, allowNull: true });
  await q.addColumn('site_snapshots', 'provenance', { type: DataTypes.JSON, allowNull: true });
}

export async function down({ context: q }: { context: QueryInterface }): Promise<void> {
  await q.removeColumn('site_snapshots', 'provenance');
  await q.removeColumn('site_snapshots', 'grid');
}
