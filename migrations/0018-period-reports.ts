import { DataTypes, type QueryInterface } from 'sequelize';

/**
 * Data-late alerts and scheduled period reports.
 *
 * - `series.late_after_ms`: how long a series may go without new data before it counts as late; NULL keeps the
 *   default derived from its sampling interval (`lateAfterMs` in lib/alerts/lateness.ts, also the overview's rule).
 * - `alerts.data_last_at` / `alerts.data_back_at` (epoch ms, as series times): for a 'data-late' alert, the last
 *   observation before the silence and the first one after it (NULL while the series is still silent). One
 *   data-late alert per series and silence (unique index), so a pass that runs twice never opens two.
 * - `report_schedules`: a lead's standing order for a period report (network or one site, monthly or quarterly)
 *   mailed to a recipient list that may hold addresses without accounts.
 */
export async function up({ context: q }: { context: QueryInterface }): Promise<void> {
  await q.addColumn('series', 'late_after_ms', { type: DataTypes.BIGINT, allowNull: true });
  await q.addColumn('alerts', 'data_last_at', { type: DataTypes.BIGINT, allowNull: true });
  await q.addColumn('alerts', 'data_back_at', { type: DataTypes.BIGINT, allowNull: true });
  await q.addIndex('alerts', ['series_id', 'data_last_at'], { unique: true, name: 'alerts_one_per_silence', where: { kind: 'data-late' } });
  await q.createTable('report_schedules', {
    id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
    name: { type: DataTypes.STRING, allowNull: false },
    /** '' = the whole network, else the site as series.site names it */
    site: { type: DataTypes.STRING, allowNull: false, defaultValue: '' },
    cadence: { type: DataTypes.STRING, allowNull: false },
    recipients: { type: DataTypes.JSON, allowNull: false },
    active: { type: DataTypes.BOOLEAN, allowNull: false, defaultValue: true },
    created_by: { type: DataTypes.INTEGER, allowNull: true, references: { model: 'users', key: 'id' }, onDelete: 'SET NULL' },
    created_at: { type: DataTypes.DATE, allowNull: false },
    updated_at: { type: DataTypes.DATE, allowNull: false },
  });
}

export async function down({ context: q }: { context: QueryInterface }): Promise<void> {
  const s = q.sequelize;
  await q.dropTable('report_schedules');
  // Data-late alerts cannot exist in the old schema: they go, with their timeline and notes.
  const lateAlerts = `SELECT id FROM alerts WHERE kind = 'data-late'`;
  await s.query(`DELETE FROM note_revisions WHERE note_id IN (SELECT id FROM notes WHERE alert_id IN (${lateAlerts}))`);
  await s.query(`DELETE FROM notes WHERE alert_id IN (${lateAlerts})`);
  await s.query(`DELETE FROM alert_events WHERE alert_id IN (${lateAlerts})`);
  await s.query(`DELETE FROM alerts WHERE kind = 'data-late'`);
  await q.removeIndex('alerts', 'alerts_one_per_silence');
  // Native DROP COLUMN (SQLite ≥ 3.35) keeps the tables' other indexes, which a rebuild by the query interface would not.
  await s.query('ALTER TABLE alerts DROP COLUMN data_back_at');
  await s.query('ALTER TABLE alerts DROP COLUMN data_last_at');
  await s.query('ALTER TABLE series DROP COLUMN late_after_ms');
}
