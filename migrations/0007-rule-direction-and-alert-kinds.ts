import { DataTypes, QueryTypes, type QueryInterface } from 'sequelize';
import { isPostgres } from '@/lib/db/dialect';

/**
 * Rules say which way they look, Kendall p stops being a gate, and alerts gain a kind.
 *
 * - `alert_rules.direction` ('rising' | 'falling' | 'either'). Existing rows get their indicator's own direction
 *   under slowing down: recovery → 'falling', skewness and kurtosis → 'either', every other indicator → 'rising'.
 *   A recovery rule therefore now looks for a *falling* recovery rate (tau ≤ −minTau), which is what slowing down
 *   predicts; before, it waited for a rise that slowing down does not give.
 * - `alert_rules.max_kendall_p` is set to NULL on every row: the Kendall p assumes independent values, which the
 *   indicator values of overlapping windows are not (on stationary nulls it is ≤ 0.05 most of the time), so it
 *   no longer decides anything. The column stays (rules still return `maxKendallP: null`); the values cleared are
 *   kept in app_state under MAX_KENDALL_KEY, so `down` puts them back.
 * - `rule_evaluations.direction`: the direction a judgement was made in (existing rows: 'rising', the only way
 *   rules looked before).
 * - `alerts.kind` ('slowing-down' | 'abrupt-shift'), `alerts.shift_time` (epoch ms, as series times) and
 *   `alerts.shift_size` (level change in the series' unit; null when the analysis did not give it); `rule_id`
 *   becomes nullable because an abrupt-shift alert comes from the change-point detection, not from a rule.
 *   One alert per series and shift instant (unique index). `alerts.peak_tau` now holds tau seen in the rule's
 *   direction. Existing rows were all judged upwards, so for rules that stay 'rising' their values already are;
 *   for the recovery, skewness and kurtosis rules whose direction changes here, the peaks of their old alerts
 *   stay the upward taus they were raised on (only a quiet period still running after the upgrade compares
 *   against them).
 *
 * SQLite cannot drop NOT NULL from a column in place, so `alerts` is rebuilt by the procedure of
 * https://www.sqlite.org/lang_altertable.html#otheralter (foreign keys off, new table, copy, drop, rename, the
 * indexes re-created from their stored SQL, foreign-key check). PostgreSQL alters the columns in place.
 */
const MAX_KENDALL_KEY = 'migration-0007.max-kendall-p';

const DIRECTION_BY_INDICATOR = `CASE indicator WHEN 'recovery' THEN 'falling' WHEN 'skewness' THEN 'either' WHEN 'kurtosis' THEN 'either' ELSE 'rising' END`;

/** Rebuilds `alerts` with a CREATE statement derived from the current one by `edit`, keeping rows and indexes. */
export async function rebuildAlerts(q: QueryInterface, edit: (sql: string) => string, columns: string): Promise<void> {
  const s = q.sequelize;
  const [table] = await s.query<{ sql: string }>(`SELECT sql FROM sqlite_master WHERE type = 'table' AND name = 'alerts'`, { type: QueryTypes.SELECT });
  const indexes = await s.query<{ sql: string }>(`SELECT sql FROM sqlite_master WHERE type = 'index' AND tbl_name = 'alerts' AND sql IS NOT NULL`, {
    type: QueryTypes.SELECT,
  });
  const created = edit(table.sql).replace(/^CREATE TABLE [`"]?alerts[`"]?/, 'CREATE TABLE `alerts_rebuilt`');
  await s.query('PRAGMA foreign_keys = OFF');
  try {
    await s.query(created);
    await s.query(`INSERT INTO alerts_rebuilt (${columns}) SELECT ${columns} FROM alerts`);
    await s.query('DROP TABLE alerts');
    await s.query('ALTER TABLE alerts_rebuilt RENAME TO alerts');
    for (const index of indexes) await s.query(index.sql);
    const broken = await s.query('PRAGMA foreign_key_check', { type: QueryTypes.SELECT });
    if (broken.length) throw new Error(`alerts rebuild left ${broken.length} broken foreign keys`);
  } finally {
    await s.query('PRAGMA foreign_keys = ON');
  }
}

const OLD_ALERT_COLUMNS = [
  'id',
  'series_id',
  'rule_id',
  'state',
  'severity',
  'assignee_id',
  'first_snapshot_id',
  'latest_snapshot_id',
  'evaluation_count',
  'peak_tau',
  'dismiss_reason',
  'closed_at',
  'version',
  'created_at',
  'updated_at',
].join(', ');

export async function up({ context: q }: { context: QueryInterface }): Promise<void> {
  const s = q.sequelize;
  await q.addColumn('alert_rules', 'direction', { type: DataTypes.STRING, allowNull: false, defaultValue: 'rising' });
  await s.query(`UPDATE alert_rules SET direction = ${DIRECTION_BY_INDICATOR}`);
  const kendall = await s.query<{ id: number; max_kendall_p: number }>('SELECT id, max_kendall_p FROM alert_rules WHERE max_kendall_p IS NOT NULL', {
    type: QueryTypes.SELECT,
  });
  if (kendall.length) {
    await s.query('INSERT INTO app_state (key, value, updated_at) VALUES (:key, :value, CURRENT_TIMESTAMP)', {
      replacements: { key: MAX_KENDALL_KEY, value: JSON.stringify(kendall.map((r) => [r.id, r.max_kendall_p])) },
    });
    await s.query('UPDATE alert_rules SET max_kendall_p = NULL');
  }
  await q.addColumn('rule_evaluations', 'direction', { type: DataTypes.STRING, allowNull: true });
  await s.query(`UPDATE rule_evaluations SET direction = 'rising'`);

  if (isPostgres(s)) {
    await s.query(
      `ALTER TABLE alerts ALTER COLUMN rule_id DROP NOT NULL, ADD COLUMN kind VARCHAR(255) NOT NULL DEFAULT 'slowing-down', ADD COLUMN shift_time BIGINT, ADD COLUMN shift_size DOUBLE PRECISION`,
    );
  } else {
    await rebuildAlerts(
      q,
      (sql) => {
        const relaxed = sql.replace(/(`rule_id` INTEGER) NOT NULL/, '$1');
        if (relaxed === sql) throw new Error('alerts.rule_id definition not found');
        return relaxed.replace(/\)\s*$/, ", `kind` VARCHAR(255) NOT NULL DEFAULT 'slowing-down', `shift_time` BIGINT, `shift_size` DOUBLE PRECISION)");
      },
      OLD_ALERT_COLUMNS,
    );
  }
  await q.addIndex('alerts', ['series_id', 'shift_time'], { unique: true, name: 'alerts_one_per_shift', where: { kind: 'abrupt-shift' } });
}

export async function down({ context: q }: { context: QueryInterface }): Promise<void> {
  const s = q.sequelize;
  // Abrupt-shift alerts have no rule and cannot exist in the old schema: they go, with their timeline and notes.
  const shiftAlerts = `SELECT id FROM alerts WHERE kind = 'abrupt-shift'`;
  await s.query(`DELETE FROM note_revisions WHERE note_id IN (SELECT id FROM notes WHERE alert_id IN (${shiftAlerts}))`);
  await s.query(`DELETE FROM notes WHERE alert_id IN (${shiftAlerts})`);
  await s.query(`DELETE FROM alert_events WHERE alert_id IN (${shiftAlerts})`);
  await s.query(`UPDATE rule_evaluations SET alert_id = NULL WHERE alert_id IN (${shiftAlerts})`);
  await s.query(`DELETE FROM alerts WHERE kind = 'abrupt-shift'`);
  await q.removeIndex('alerts', 'alerts_one_per_shift');
  if (isPostgres(s)) {
    await s.query('ALTER TABLE alerts DROP COLUMN kind, DROP COLUMN shift_time, DROP COLUMN shift_size, ALTER COLUMN rule_id SET NOT NULL');
  } else {
    await rebuildAlerts(
      q,
      (sql) =>
        sql
          .replace(/`rule_id` INTEGER(?! NOT NULL)/, '`rule_id` INTEGER NOT NULL')
          .replace(/,\s*`kind` VARCHAR\(255\) NOT NULL DEFAULT 'slowing-down', `shift_time` BIGINT, `shift_size` DOUBLE PRECISION\)\s*$/, ')'),
      OLD_ALERT_COLUMNS,
    );
  }
  // Native DROP COLUMN (SQLite ≥ 3.35) keeps the table's indexes, which a rebuild by the query interface would not.
  await s.query('ALTER TABLE rule_evaluations DROP COLUMN direction');
  const [saved] = await s.query<{ value: string }>('SELECT value FROM app_state WHERE key = :key', {
    replacements: { key: MAX_KENDALL_KEY },
    type: QueryTypes.SELECT,
  });
  if (saved) {
    for (const [id, p] of JSON.parse(saved.value) as [number, number][]) {
      await s.query('UPDATE alert_rules SET max_kendall_p = :p WHERE id = :id', { replacements: { id, p } });
    }
    await s.query('DELETE FROM app_state WHERE key = :key', { replacements: { key: MAX_KENDALL_KEY } });
  }
  await s.query('ALTER TABLE alert_rules DROP COLUMN direction');
}
