import fs from 'node:fs';
import path from 'node:path';
import { beforeAll, describe, expect, it } from 'vitest';
import { useTempDataDir } from '../support/temp-db';

const dataDir = useTempDataDir('bw-feeds-');

const { migrateUp } = await import('@/migrations');
const { IngestRun, Mark, Series, db } = await import('@/models');
const { createSeries } = await import('@/lib/series/registry');
const { createFeed } = await import('@/lib/feeds/registry');
const { runDropIntake } = await import('@/lib/intake/drop-folders');
const { loadFlaggedObservations, loadObservations } = await import('@/lib/analysis/observations');
const { feedCreateSchema } = await import('@/lib/schemas/feed');

const VARIABLES = [
  ['temp', 'mooring-temp'],
  ['sal', 'mooring-sal'],
  ['do', 'mooring-do'],
  ['chl', 'mooring-chl'],
] as const;
const HOUR = 3_600_000;
const T0 = Date.UTC(2025, 5, 1);

beforeAll(async () => {
  await migrateUp();
  for (const [, slug] of VARIABLES) await createSeries({ slug, name: slug, intervalMs: HOUR }, null);
  await createFeed(
    {
      slug: 'north-mooring',
      name: 'North mooring',
      timeColumn: 'Time',
      timeFormat: 'iso8601',
      columns: Object.fromEntries(VARIABLES),
      flagColumns: { temp: 'temp_qc', sal: 'sal_qc', do: 'do_qc', chl: 'chl_qc' },
    },
    null,
  );
});

function feedFolder(): string {
  const folder = path.join(dataDir, 'drops', 'feeds', 'north-mooring');
  fs.mkdirSync(folder, { recursive: true });
  return folder;
}

/** A station file as loggers write it: one time column, four variables, each with its QARTOD flag column. */
function stationFile(rows: number, start = 0): string {
  const lines = ['Time,temp,temp_qc,sal,sal_qc,do,do_qc,chl,chl_qc'];
  for (let i = start; i < start + rows; i++) {
    const flag = (k: number) => (i === 3 + k ? 4 : i === 5 ? 3 : 1);
    lines.push([new Date(T0 + i * HOUR).toISOString(), 12 + i / 100, flag(0), 34 + i / 1000, flag(1), 8 - i / 100, flag(2), 1 + i / 50, flag(3)].join(','));
  }
  return `${lines.join('\n')}\n`;
}

describe('station feeds', () => {
  it('lands a file with four variables and their flag columns in four series, with flags, in one report', async () => {
    fs.writeFileSync(path.join(feedFolder(), 'station-0601.csv'), stationFile(10));
    const results = await runDropIntake({ settleMs: 0 });
    expect(results).toEqual([{ file: 'feeds/north-mooring/station-0601.csv', status: 'succeeded', movedTo: 'processed/station-0601.csv' }]);
    const report = JSON.parse(fs.readFileSync(path.join(feedFolder(), 'processed', 'station-0601.csv.report.json'), 'utf8'));
    expect(report).toMatchObject({ feed: 'north-mooring', status: 'succeeded', file: 'station-0601.csv' });
    expect(report.series.map((s: { series: string; accepted: number }) => [s.series, s.accepted])).toEqual(VARIABLES.map(([, slug]) => [slug, 10]));
    expect(report.series[0].flagged).toEqual({ pass: 8, suspect: 1, fail: 1 });
    await db();
    for (let k = 0; k < VARIABLES.length; k++) {
      const seriesId = (await IngestRun.findByPk(report.series[k].runId))!.seriesId!;
      const { flag } = await loadFlaggedObservations(seriesId);
      const expected = Array.from({ length: 10 }, (_, i) => (i === 3 + k ? 4 : i === 5 ? 3 : 1));
      expect(Array.from(flag)).toEqual(expected);
      // the failed point stays out of the analysis
      expect((await loadObservations(seriesId)).time.length).toBe(9);
    }
  });

  it('rejects a file missing a mapped column whole: no series stores anything', async () => {
    const text = stationFile(4, 100).replace('chl,chl_qc', 'chlorophyll,chl_qc');
    fs.writeFileSync(path.join(feedFolder(), 'renamed-column.csv'), text);
    const [result] = await runDropIntake({ settleMs: 0 });
    expect(result).toMatchObject({ status: 'rejected', movedTo: 'rejected/renamed-column.csv' });
    const report = JSON.parse(fs.readFileSync(path.join(feedFolder(), 'rejected', 'renamed-column.csv.report.json'), 'utf8'));
    expect(report.message).toContain('no column "chl"');
    expect(report.series).toHaveLength(4);
    for (const entry of report.series) expect(entry).toMatchObject({ status: 'rejected', accepted: 0 });
  });

  it('applies the same file once, and keeps a reading missing in one column for the others', async () => {
    const text = stationFile(3, 200).replace(/(\n[^,]+,[^,]+,1,)[^,]+(,)/, '$1$2');
    fs.writeFileSync(path.join(feedFolder(), 'gap.csv'), text);
    await runDropIntake({ settleMs: 0 });
    const report = JSON.parse(fs.readFileSync(path.join(feedFolder(), 'processed', 'gap.csv.report.json'), 'utf8'));
    expect(report.series.map((s: { accepted: number }) => s.accepted)).toEqual([3, 2, 3, 3]);
    expect(report.series[1].rejectedRows[0]).toMatchObject({ line: 2, column: 'sal' });

    fs.writeFileSync(path.join(feedFolder(), 'gap-again.csv'), text);
    await runDropIntake({ settleMs: 0 });
    const again = JSON.parse(fs.readFileSync(path.join(feedFolder(), 'processed', 'gap-again.csv.report.json'), 'utf8'));
    expect(again).toMatchObject({ status: 'succeeded', alreadyApplied: true });
  });

  it('marks a maintenance break on every series of the feed from its maintenance column, once', async () => {
    for (const slug of ['south-temp', 'south-sal']) await createSeries({ slug, name: slug, intervalMs: HOUR }, null);
    await createFeed(
      { slug: 'south-mooring', name: 'South mooring', timeColumn: 'time', columns: { temp: 'south-temp', sal: 'south-sal' }, maintenanceColumn: 'event' },
      null,
    );
    const folder = path.join(dataDir, 'drops', 'feeds', 'south-mooring');
    fs.mkdirSync(folder, { recursive: true });
    const row = (i: number, event = '') => `${new Date(T0 + i * HOUR).toISOString()},${10 + i / 10},${30 + i / 10},${event}`;
    fs.writeFileSync(path.join(folder, 'a.csv'), ['time,temp,sal,event', row(0), row(1), row(2, 'sensor swap (new CT serial 4411)'), row(3)].join('\n'));
    await runDropIntake({ settleMs: 0 });
    const report = JSON.parse(fs.readFileSync(path.join(folder, 'processed', 'a.csv.report.json'), 'utf8'));
    expect(report).toMatchObject({ status: 'succeeded', marksAdded: 2 });
    const ids = (await Series.findAll({ where: { slug: ['south-temp', 'south-sal'] } })).map((s) => s.id);
    const marks = await Mark.findAll({ where: { seriesId: ids } });
    expect(marks.map((m) => [Number(m.at), m.kind, m.note])).toEqual([
      [T0 + 2 * HOUR, 'maintenance', 'sensor swap (new CT serial 4411)'],
      [T0 + 2 * HOUR, 'maintenance', 'sensor swap (new CT serial 4411)'],
    ]);
    // the same visit in the next file (overlapping rows) is not marked twice
    fs.writeFileSync(path.join(folder, 'b.csv'), ['time,temp,sal,event', row(2, 'sensor swap (new CT serial 4411)'), row(4)].join('\n'));
    await runDropIntake({ settleMs: 0 });
    expect(JSON.parse(fs.readFileSync(path.join(folder, 'processed', 'b.csv.report.json'), 'utf8')).marksAdded).toBe(0);
    expect(await Mark.count({ where: { seriesId: ids } })).toBe(2);
    expect(
      feedCreateSchema.safeParse({ slug: 'x-feed', name: 'X', timeColumn: 'time', columns: { temp: 'south-temp' }, maintenanceColumn: 'temp' }).success,
    ).toBe(false);
  });

  it('refuses feeds that cannot work', async () => {
    const base = { slug: 'bad-feed', name: 'Bad', timeColumn: 'Time', columns: { temp: 'mooring-temp' } };
    expect(feedCreateSchema.safeParse({ ...base, columns: {} }).success).toBe(false);
    expect(feedCreateSchema.safeParse({ ...base, columns: { temp: 'mooring-temp', t2: 'mooring-temp' } }).success).toBe(false);
    expect(feedCreateSchema.safeParse({ ...base, columns: { Time: 'mooring-temp' } }).success).toBe(false);
    expect(feedCreateSchema.safeParse({ ...base, flagColumns: { sal: 'sal_qc' } }).success).toBe(false);
    await expect(createFeed({ ...base, columns: { temp: 'no-such-series' } }, null)).rejects.toMatchObject({ status: 422 });
    await expect(createFeed({ ...base, slug: 'north-mooring' }, null)).rejects.toMatchObject({ status: 409 });
  });
});
