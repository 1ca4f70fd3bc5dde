import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { QueryTypes } from 'sequelize';
import { useTempDataDir } from '../support/temp-db';

useTempDataDir();
const { migrateDown, migrateUp } = await import('@/migrations');
const { db, closeDatabase } = await import('@/models');

const NAME = '0007-rule-direction-and-alert-kinds';
const now = "'2025-01-01 00:00:00.000 +00:00'";

async function rows<T extends object = Record<string, unknown>>(sql: string): Promise<T[]> {
  return (await db()).query<T>(sql, { type: QueryTypes.SELECT });
}
async function columns(table: string): Promise<string[]> {
  return (await rows<{ name: string }>(`PRAGMA table_info(${table})`)).map((c) => c.name);
}
async function indexes(table: string): Promise<string[]> {
  return (await rows<{ name: string }>(`SELECT name FROM sqlite_master WHERE type = 'index' AND tbl_name = '${table}' AND sql IS NOT NULL ORDER BY name`)).map(
    (r) => r.name,
  );
}

describe('migration 0007 (rule direction, Kendall gate removed, alert kinds)', () => {
  beforeAll(async () => {
    await db();
    await migrateUp();
    await migrateDown(NAME);
  });
  afterAll(async () => {
    await closeDatabase();
  });

  it('back-fills directions, clears Kendall gates, keeps alerts and indexes; down restores; up again', async () => {
    const s = await db();
    const alertIndexesBefore = await indexes('alerts');
    await s.query(`INSERT INTO series (id, slug, name, csv_mapping, settings, created_at, updated_at) VALUES (1, 'a', 'A', '{}', '{}', ${now}, ${now})`);
    for (const [id, indicator, kendall] of [
      [1, 'recovery', '0.01'],
      [2, 'skewness', 'NULL'],
      [3, 'ac1', '0.05'],
    ] as const) {
      await s.query(
        `INSERT INTO alert_rules (id, series_id, indicator, min_tau, max_kendall_p, severity, created_at, updated_at) VALUES (${id}, 1, '${indicator}', 0.3, ${kendall}, 'watch', ${now}, ${now})`,
      );
    }
    await s.query(
      `INSERT INTO analysis_snapshots (id, series_id, settings, summary, status, n, created_at, updated_at) VALUES (1, 1, '{}', '{}', 'ok', 10, ${now}, ${now})`,
    );
    await s.query(
      `INSERT INTO alerts (id, series_id, rule_id, state, severity, first_snapshot_id, latest_snapshot_id, peak_tau, created_at, updated_at) VALUES (1, 1, 3, 'new', 'watch', 1, 1, 0.4, ${now}, ${now})`,
    );
    await s.query(
      `INSERT INTO rule_evaluations (rule_id, series_id, snapshot_id, passed, streak, alert_id, created_at, updated_at) VALUES (3, 1, 1, 1, 1, 1, ${now}, ${now})`,
    );

    // Up to this migration only, so later ones (their own indexes) do not enter its checks.
    await migrateUp(NAME);
    expect(await rows('SELECT id, direction, max_kendall_p FROM alert_rules ORDER BY id')).toEqual([
      { id: 1, direction: 'falling', max_kendall_p: null },
      { id: 2, direction: 'either', max_kendall_p: null },
      { id: 3, direction: 'rising', max_kendall_p: null },
    ]);
    expect(await rows('SELECT id, kind, rule_id, peak_tau FROM alerts')).toEqual([{ id: 1, kind: 'slowing-down', rule_id: 3, peak_tau: 0.4 }]);
    expect(await rows('SELECT direction, alert_id FROM rule_evaluations')).toEqual([{ direction: 'rising', alert_id: 1 }]);
    expect(await indexes('alerts')).toEqual([...alertIndexesBefore, 'alerts_one_per_shift'].sort());
    // A shift alert has no rule; one per series and shift instant.
    const shift = `INSERT INTO alerts (series_id, rule_id, kind, shift_time, state, severity, first_snapshot_id, latest_snapshot_id, created_at, updated_at) VALUES (1, NULL, 'abrupt-shift', 1600000000000, 'new', 'warning', 1, 1, ${now}, ${now})`;
    await s.query(shift);
    await expect(s.query(shift)).rejects.toMatchObject({ name: 'SequelizeUniqueConstraintError' });
    // The one-open-alert-per-rule constraint survived the rebuild.
    await expect(
      s.query(
        `INSERT INTO alerts (series_id, rule_id, state, severity, first_snapshot_id, latest_snapshot_id, created_at, updated_at) VALUES (1, 3, 'new', 'watch', 1, 1, ${now}, ${now})`,
      ),
    ).rejects.toMatchObject({ name: 'SequelizeUniqueConstraintError' });
    expect(await rows('PRAGMA foreign_key_check')).toEqual([]);

    await migrateDown(NAME);
    expect(await columns('alert_rules')).not.toContain('direction');
    expect(await columns('alerts')).not.toContain('kind');
    expect(await rows('SELECT id, max_kendall_p FROM alert_rules ORDER BY id')).toEqual([
      { id: 1, max_kendall_p: 0.01 },
      { id: 2, max_kendall_p: null },
      { id: 3, max_kendall_p: 0.05 },
    ]);
    expect(await rows('SELECT id, rule_id FROM alerts')).toEqual([{ id: 1, rule_id: 3 }]);
    expect(await indexes('alerts')).toEqual(alertIndexesBefore);
    expect(await rows('SELECT alert_id FROM rule_evaluations')).toEqual([{ alert_id: 1 }]);

    await migrateUp();
    expect(await columns('alerts')).toEqual(expect.arrayContaining(['kind', 'shift_time', 'shift_size']));
  });
});
