import { DataTypes, type QueryInterface } from 'sequelize';

/**
 * Station data: quality flags on every observation, quality-control settings per series, and feeds that map one
 * station file onto several series.
 * - `observations.flag`: the point's flag on the QARTOD scale (1 pass, 2 not evaluated, 3 suspect, 4 fail,
 *   9 missing; U.S. IOOS QARTOD manuals); 2 for every row stored before this migration, since nothing judged them.
 * - `observations.flag_test`: which test set that flag (`gross-range`, `spike`, `rate-of-change`, `flat-line`,
 *   `sampling-interval`), `source` when the file's own flag column did, `analyst` for an override; null when none.
 * - `observations.source_flag`: the flag the file carried, kept apart so a re-run of the tests can combine it again.
 * - `series.qc`: the series' quality-control settings (`qcConfigSchema` in lib/schemas/quality.ts), null for none.
 * - `feeds`: a file layout (time column and format, value columns → series slugs, flag columns, and a column whose
 *   filled cells mark maintenance visits or sensor events on every series of the feed).
 * - `observation_versions`: the earlier value of every replaced point (reprocessed data sent again with the duplicate
 *   policy `replace`), with the run that had written it and the run that replaced it, so who, when and why stay
 *   on record (the runs carry user, token, file and time).
 * SQLite adds a column with a constant default without rewriting the table, so this is instant on a large record.
 */
export async function up({ context: q }: { context: QueryInterface }): Promise<void> {
  await q.addColumn('observations', 'flag', { type: DataTypes.INTEGER, allowNull: false, defaultValue: 2 });
  await q.addColumn('observations', 'flag_test', { type: DataTypes.STRING(32), allowNull: true });
  await q.addColumn('observations', 'source_flag', { type: DataTypes.INTEGER, allowNull: true });
  await q.addColumn('series', 'qc', { type: DataTypes.JSON, allowNull: true });
  await q.createTable('feeds', {
    id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
    slug: { type: DataTypes.STRING, allowNull: false, unique: true },
    name: { type: DataTypes.STRING, allowNull: false },
    time_column: { type: DataTypes.STRING, allowNull: false },
    time_format: { type: DataTypes.STRING, allowNull: false },
    columns: { type: DataTypes.JSON, allowNull: false },
    flag_columns: { type: DataTypes.JSON, allowNull: false },
    maintenance_column: { type: DataTypes.STRING, allowNull: true },
    created_by: { type: DataTypes.INTEGER, allowNull: true },
    created_at: { type: DataTypes.DATE, allowNull: false },
    updated_at: { type: DataTypes.DATE, allowNull: false },
  });
  await q.createTable('observation_versions', {
    id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
    series_id: { type: DataTypes.INTEGER, allowNull: false },
    t: { type: DataTypes.BIGINT, allowNull: false },
    value: { type: DataTypes.DOUBLE, allowNull: false },
    flag: { type: DataTypes.INTEGER, allowNull: false },
    flag_test: { type: DataTypes.STRING(32), allowNull: true },
    source_flag: { type: DataTypes.INTEGER, allowNull: true },
    /** the run that had written the earlier value (null for rows stored before runs were recorded) */
    ingest_run_id: { type: DataTypes.INTEGER, allowNull: true },
    replaced_by_run_id: { type: DataTypes.INTEGER, allowNull: false },
    replaced_at: { type: DataTypes.DATE, allowNull: false },
  });
  await q.addIndex('observation_versions', ['series_id', 't']);
}

export async function down({ context: q }: { context: QueryInterface }): Promise<void> {
  await q.dropTable('observation_versions');
  await q.dropTable('feeds');
  // Native DROP COLUMN (SQLite ≥ 3.35): removeColumn would rebuild series, and dropping it during the rebuild fires
  // every foreign key that points at it (observations, alerts, rules…), besides copying every observation.
  const s = q.sequelize;
  await s.query('ALTER TABLE series DROP COLUMN qc');
  await s.query('ALTER TABLE observations DROP COLUMN source_flag');
  await s.query('ALTER TABLE observations DROP COLUMN flag_test');
  await s.query('ALTER TABLE observations DROP COLUMN flag');
}
