import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { QueryTypes } from 'sequelize';
import { useTempDataDir } from '../support/temp-db';

useTempDataDir();
const { migrateDown, migrateUp } = await import('@/migrations');
const { db, closeDatabase } = await import('@/models');

const NAME = '0009-marks-and-triage-names';
const now = "'2025-01-01 00:00:00.000 +00:00'";

async function rows<T extends object = Record<string, unknown>>(sql: string): Promise<T[]> {
  return (await db()).query<T>(sql, { type: QueryTypes.SELECT });
}

const OLD_RESULT = JSON.stringify({
  transitions: [{ at: 5, openAtTransition: true }],
  alarms: [{ time: 1, transitionAt: 5 }],
  restarts: [
    { at: 5, reason: 'transition' },
    { at: 9, reason: 'maintenance' },
  ],
});
const NEW_RESULT = JSON.stringify({
  tippingPoints: [{ at: 5, openAtTippingPoint: true }],
  alarms: [{ time: 1, tippingPointAt: 5 }],
  restarts: [
    { at: 5, reason: 'tipping-point' },
    { at: 9, reason: 'maintenance' },
  ],
});

describe('migration 0009 (marks get their own name)', () => {
  beforeAll(async () => {
    await db();
    await migrateUp();
    await migrateDown(NAME);
  });
  afterAll(async () => {
    await closeDatabase();
  });

  it('renames the table and the kind, rewrites stored results and summaries; down restores; up again', async () => {
    const s = await db();
    await s.query(`INSERT INTO series (id, slug, name, csv_mapping, settings, created_at, updated_at) VALUES (1, 'a', 'A', '{}', '{}', ${now}, ${now})`);
    await s.query(
      `INSERT INTO transitions (id, series_id, at, note, kind, created_at, updated_at) VALUES (1, 1, 5, 'fold', 'transition', ${now}, ${now}), (2, 1, 9, 'probe cleaned', 'maintenance', ${now}, ${now})`,
    );
    await s.query(
      `INSERT INTO alert_rules (id, series_id, indicator, min_tau, severity, created_at, updated_at) VALUES (1, 1, 'ac1', 0.3, 'watch', ${now}, ${now})`,
    );
    await s.query(
      `INSERT INTO backtest_jobs (id, rule_id, series_id, params, result, created_at, updated_at) VALUES (1, 1, 1, '{}', :result, ${now}, ${now})`,
      { replacements: { result: OLD_RESULT } },
    );
    const oldSummary = JSON.stringify({ stretch: { from: 5, to: 9, startsAfter: 'transition' } });
    await s.query(
      `INSERT INTO analysis_snapshots (id, series_id, settings, summary, chart_view, status, n, created_at, updated_at) VALUES (1, 1, '{}', :summary, :summary, 'ok', 10, ${now}, ${now})`,
      { replacements: { summary: oldSummary } },
    );

    await migrateUp();
    expect(await rows('SELECT id, kind FROM marks ORDER BY id')).toEqual([
      { id: 1, kind: 'tipping-point' },
      { id: 2, kind: 'maintenance' },
    ]);
    expect(await rows(`SELECT name FROM sqlite_master WHERE type = 'table' AND name = 'transitions'`)).toEqual([]);
    expect((await rows<{ result: string }>('SELECT result FROM backtest_jobs'))[0].result).toBe(NEW_RESULT);
    const snapshot = (await rows<{ summary: string; chart_view: string }>('SELECT summary, chart_view FROM analysis_snapshots'))[0];
    expect(JSON.parse(snapshot.summary).stretch.startsAfter).toBe('tipping-point');
    expect(JSON.parse(snapshot.chart_view).stretch.startsAfter).toBe('tipping-point');
    expect(await rows('PRAGMA foreign_key_check')).toEqual([]);

    await migrateDown(NAME);
    expect(await rows('SELECT id, kind FROM transitions ORDER BY id')).toEqual([
      { id: 1, kind: 'transition' },
      { id: 2, kind: 'maintenance' },
    ]);
    expect((await rows<{ result: string }>('SELECT result FROM backtest_jobs'))[0].result).toBe(OLD_RESULT);
    expect(JSON.parse((await rows<{ summary: string }>('SELECT summary FROM analysis_snapshots'))[0].summary).stretch.startsAfter).toBe('transition');

    await migrateUp();
    expect(await rows('SELECT id, kind FROM marks ORDER BY id')).toEqual([
      { id: 1, kind: 'tipping-point' },
      { id: 2, kind: 'maintenance' },
    ]);
    expect(await rows('PRAGMA foreign_key_check')).toEqual([]);
  });
});
