import { DataTypes, QueryTypes, type QueryInterface } from 'sequelize';
import { isPostgres } from '@/lib/db/dialect';
import { rebuildAlerts } from './0007-rule-direction-and-alert-kinds';

/**
 * Rules on a site's site-level indicators (pc1-variance, pc1-share, maf-ac1; lib/engine/site.ts).
 *
 * - `alert_rules.site_id`: a rule on a site rather than a series (its `series_id` is then NULL; a rule with neither
 *   stays a default for new series).
 * - `alerts.site_id`, and `alerts.series_id` becomes nullable: a 'site-slowing-down' alert belongs to a site, and its
 *   first and latest snapshot ids are site snapshots. At most one open alert per site and rule.
 * - `site_rule_evaluations`: every judgement of a site rule on a site snapshot, as `rule_evaluations` is for series
 *   (unique per rule and snapshot, so two schedulers never judge twice).
 *
 * SQLite cannot drop NOT NULL in place, so `alerts` is rebuilt as migration 0007 does; PostgreSQL alters the column.
 */
async function alertColumns(q: QueryInterface): Promise<string> {
  const columns = await q.sequelize.query<{ name: string }>('PRAGMA table_info(alerts)', { type: QueryTypes.SELECT });
  return columns.map((c) => c.name).join(', ');
}

export async function up({ context: q }: { context: QueryInterface }): Promise<void> {
  const s = q.sequelize;
  // SQLite allows ADD COLUMN with a REFERENCES clause when the default is NULL, and DROP COLUMN removes it again.
  await s.query('ALTER TABLE alert_rules ADD COLUMN site_id INTEGER REFERENCES sites(id) ON DELETE CASCADE');
  await s.query('CREATE INDEX alert_rules_site_id ON alert_rules (site_id)');
  if (isPostgres(s)) {
    await s.query('ALTER TABLE alerts ALTER COLUMN series_id DROP NOT NULL');
  } else {
    const columns = await alertColumns(q);
    await rebuildAlerts(
      q,
      (sql) => {
        const relaxed = sql.replace(/(`series_id` INTEGER) NOT NULL/, '$1');
        if (relaxed === sql) throw new Error('alerts.series_id definition not found');
        return relaxed;
      },
      columns,
    );
  }
  await s.query('ALTER TABLE alerts ADD COLUMN site_id INTEGER REFERENCES sites(id) ON DELETE CASCADE');
  await q.addIndex('alerts', ['site_id', 'rule_id'], {
    unique: true,
    name: 'alerts_one_open_per_site_rule',
    where: { state: ['new', 'acknowledged', 'escalated'], kind: 'site-slowing-down' },
  });
  await q.createTable('site_rule_evaluations', {
    id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
    rule_id: { type: DataTypes.INTEGER, allowNull: false, references: { model: 'alert_rules', key: 'id' }, onDelete: 'CASCADE' },
    site_id: { type: DataTypes.INTEGER, allowNull: false, references: { model: 'sites', key: 'id' }, onDelete: 'CASCADE' },
    site_snapshot_id: { type: DataTypes.INTEGER, allowNull: false },
    direction: { type: DataTypes.STRING, allowNull: false },
    tau: { type: DataTypes.DOUBLE, allowNull: true },
    surrogate_p: { type: DataTypes.DOUBLE, allowNull: true },
    level: { type: DataTypes.DOUBLE, allowNull: true },
    passed: { type: DataTypes.BOOLEAN, allowNull: false },
    streak: { type: DataTypes.INTEGER, allowNull: false },
    alert_id: { type: DataTypes.INTEGER, allowNull: true, references: { model: 'alerts', key: 'id' }, onDelete: 'SET NULL' },
    outcome: { type: DataTypes.STRING, allowNull: false, defaultValue: '' },
    created_at: { type: DataTypes.DATE, allowNull: false },
    updated_at: { type: DataTypes.DATE, allowNull: false },
  });
  await q.addIndex('site_rule_evaluations', ['rule_id', 'site_snapshot_id'], { unique: true, name: 'site_rule_evaluations_once' });
}

export async function down({ context: q }: { context: QueryInterface }): Promise<void> {
  const s = q.sequelize;
  // Site alerts have no series and cannot exist in the old schema: they go, with their timeline and notes.
  const siteAlerts = 'SELECT id FROM alerts WHERE site_id IS NOT NULL';
  await s.query('DROP TABLE site_rule_evaluations');
  await s.query(`DELETE FROM note_revisions WHERE note_id IN (SELECT id FROM notes WHERE alert_id IN (${siteAlerts}))`);
  await s.query(`DELETE FROM notes WHERE alert_id IN (${siteAlerts})`);
  await s.query(`DELETE FROM alert_events WHERE alert_id IN (${siteAlerts})`);
  await s.query(`DELETE FROM alerts WHERE site_id IS NOT NULL`);
  await q.removeIndex('alerts', 'alerts_one_open_per_site_rule');
  await s.query('ALTER TABLE alerts DROP COLUMN site_id');
  if (isPostgres(s)) {
    await s.query('ALTER TABLE alerts ALTER COLUMN series_id SET NOT NULL');
  } else {
    const columns = await alertColumns(q);
    await rebuildAlerts(q, (sql) => sql.replace(/`series_id` INTEGER(?! NOT NULL)/, '`series_id` INTEGER NOT NULL'), columns);
  }
  await s.query('DELETE FROM backtest_jobs WHERE rule_id IN (SELECT id FROM alert_rules WHERE site_id IS NOT NULL)');
  await s.query('DELETE FROM alert_rules WHERE site_id IS NOT NULL');
  await s.query('DROP INDEX IF EXISTS alert_rules_site_id');
  await s.query('ALTER TABLE alert_rules DROP COLUMN site_id');
}
