import { DataTypes, type QueryInterface } from 'sequelize';

/**
 * Data versions of a series, so an analysis can say which data it read and be repeated on an earlier state.
 * - `data_versions`: one row per intake run that stored new or replaced values of a series, numbered 1, 2, 3 … per
 *   series in the order the runs committed (inside the run's write transaction, so the numbers follow commit order
 *   even when run ids, given at a run's start, do not), with its counts and the reason the sender gave. Version 0 is
 *   the record as it stood before versions were counted (seeded rows, runs before this migration).
 * - `reanalyses`: an analysis of a series on a chosen earlier version (its values rebuilt from `observations` and
 *   `observation_versions`), kept apart from `analysis_snapshots` so it never becomes the live evidence that rules
 *   judge.
 */
export async function up({ context: q }: { context: QueryInterface }): Promise<void> {
  await q.createTable('data_versions', {
    id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
    series_id: { type: DataTypes.INTEGER, allowNull: false },
    version: { type: DataTypes.INTEGER, allowNull: false },
    ingest_run_id: { type: DataTypes.INTEGER, allowNull: false },
    inserted: { type: DataTypes.INTEGER, allowNull: false },
    replaced: { type: DataTypes.INTEGER, allowNull: false },
    reason: { type: DataTypes.TEXT, allowNull: true },
    created_at: { type: DataTypes.DATE, allowNull: false },
  });
  await q.addIndex('data_versions', ['series_id', 'version'], { unique: true, name: 'data_versions_series_version' });
  await q.addIndex('data_versions', ['series_id', 'ingest_run_id'], { unique: true, name: 'data_versions_series_run' });
  await q.createTable('reanalyses', {
    id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
    series_id: { type: DataTypes.INTEGER, allowNull: false },
    data_version: { type: DataTypes.INTEGER, allowNull: false },
    settings: { type: DataTypes.JSON, allowNull: false },
    summary: { type: DataTypes.JSON, allowNull: false },
    status: { type: DataTypes.STRING, allowNull: false },
    error: { type: DataTypes.TEXT, allowNull: true },
    n: { type: DataTypes.INTEGER, allowNull: false, defaultValue: 0 },
    data_from: { type: DataTypes.BIGINT, allowNull: true },
    data_to: { type: DataTypes.BIGINT, allowNull: true },
    duration_ms: { type: DataTypes.INTEGER, allowNull: true },
    provenance: { type: DataTypes.JSON, allowNull: false },
    requested_by: { type: DataTypes.INTEGER, allowNull: true },
    created_at: { type: DataTypes.DATE, allowNull: false },
    updated_at: { type: DataTypes.DATE, allowNull: false },
  });
  await q.addIndex('reanalyses', ['series_id', 'id'], { name: 'reanalyses_series' });
}

export async function down({ context: q }: { context: QueryInterface }): Promise<void> {
  await q.dropTable('reanalyses');
  await q.dropTable('data_versions');
}
