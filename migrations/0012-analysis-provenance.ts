import { DataTypes, type QueryInterface } from 'sequelize';

/**
 * Provenance of every analysis, so a reviewer can be handed the exact data and settings behind an alert:
 * - `observations.ingest_run_id`: the ingest run that last wrote the row (insert or replacement); null for rows
 *   stored before this migration and for the demo's seeded rows. No foreign key: runs are a log, and a row's
 *   number must survive whatever happens to the log.
 * - `analysis_snapshots.provenance`: the SHA-256 of the analysed observations in their canonical form, how many
 *   rows, which ingest runs contributed them, the engine version, the interval and breaks given to the engine, and
 *   the seed (lib/analysis/provenance.ts).
 * SQLite adds a nullable column without rewriting the table, so this is instant even on a large record.
 */
export async function up({ context: q }: { context: QueryInterface }): Promise<void> {
  await q.addColumn('observations', 'ingest_run_id', { type: DataTypes.INTEGER, allowNull: true });
  await q.addColumn('analysis_snapshots', 'provenance', { type: DataTypes.JSON, allowNull: true });
}

/**
 * Native DROP COLUMN (SQLite ≥ 3.35): the query interface's removeColumn rebuilds a table on SQLite, and dropping
 * analysis_snapshots during that rebuild would fire the foreign keys that point at it (alerts' evidence), besides
 * copying every observation.
 */
export async function down({ context: q }: { context: QueryInterface }): Promise<void> {
  await q.sequelize.query('ALTER TABLE analysis_snapshots DROP COLUMN provenance');
  await q.sequelize.query('ALTER TABLE observations DROP COLUMN ingest_run_id');
}
