import { beforeAll, describe, expect, it } from 'vitest';
import { useTempDataDir } from '../support/temp-db';

useTempDataDir('bw-intake-');

const { migrateUp } = await import('@/migrations');
const { IngestRun, Series, db } = await import('@/models');
const { createSeries } = await import('@/lib/series/registry');
const { ingestObservations, previewObservations, sweepStaleRuns } = await import('@/lib/intake/pipeline');
const { contentHashOf } = await import('@/lib/intake/content-hash');
const { loadObservations, unpackPage } = await import('@/lib/analysis/observations');
const { acquireLease } = await import('@/lib/db/leases');

beforeAll(async () => {
  await migrateUp();
});

const csv = (rows: [string, number | string][]) => `time,value\n${rows.map(([t, v]) => `${t},${v}`).join('\n')}\n`;

async function freshSeries(slug: string, fields: Record<string, unknown> = {}) {
  return createSeries({ slug, name: slug, ...fields }, null);
}

describe('ingestObservations', () => {
  it('stores a file once, marks the series for analysis, and recognises the same content again', async () => {
    const series = await freshSeries('north-buoy');
    const text = csv([
      ['2024-01-02T00:00:00Z', 2],
      ['2024-01-01T00:00:00Z', 1],
      ['2024-01-03T00:00:00Z', 'x'],
    ]);
    const first = await ingestObservations({ series, source: 'drop', fileName: 'a.csv', contentHash: contentHashOf(text), csv: text });
    expect(first).toMatchObject({ status: 'succeeded', rowsRead: 3, accepted: 2, duplicates: 0, rejected: 1, alreadyApplied: false });
    expect(first.rejectedRows).toEqual([{ line: 4, column: 'value', reason: '"x" is not a number' }]);
    const stored = await loadObservations(series.id);
    expect(Array.from(stored.time)).toEqual([Date.UTC(2024, 0, 1), Date.UTC(2024, 0, 2)]);
    const marked = await Series.findByPk(series.id);
    expect(marked!.needsAnalysis).toBe(true);
    expect(marked!.dataChangedAt).toBeInstanceOf(Date);

    const again = await ingestObservations({ series, source: 'drop', fileName: 'a-copy.csv', contentHash: contentHashOf(text), csv: text });
    expect(again).toMatchObject({ status: 'succeeded', alreadyApplied: true, previousRunId: first.runId, accepted: 0 });
    expect((await loadObservations(series.id)).time.length).toBe(2);
    const run = await IngestRun.findByPk(first.runId);
    expect(run).toMatchObject({ status: 'succeeded', accepted: 2, rejected: 1, rowsRead: 3 });
    expect(run!.durationMs).toBeGreaterThanOrEqual(0);
  });

  it('counts same-value points as duplicates and rejects different values unless the policy is replace', async () => {
    const series = await freshSeries('dup-check');
    await ingestObservations({
      series,
      source: 'push',
      csv: csv([
        ['2024-01-01T00:00:00Z', 1],
        ['2024-01-02T00:00:00Z', 2],
      ]),
    });
    const second = await ingestObservations({
      series,
      source: 'push',
      csv: csv([
        ['2024-01-01T00:00:00Z', 1],
        ['2024-01-02T00:00:00Z', 5],
        ['2024-01-03T00:00:00Z', 3],
      ]),
    });
    expect(second).toMatchObject({ accepted: 1, duplicates: 1, rejected: 1, replaced: 0 });
    expect(second.rejectedRows[0]).toMatchObject({ line: 3, column: 'time' });
    expect(second.rejectedRows[0].reason).toContain('already stored');
    expect(Array.from((await loadObservations(series.id)).value)).toEqual([1, 2, 3]);

    await Series.update({ duplicatePolicy: 'replace' }, { where: { id: series.id } });
    const replacing = await Series.findByPk(series.id);
    const third = await ingestObservations({ series: replacing!, source: 'push', points: [{ time: '2024-01-02T00:00:00Z', value: 5 }] });
    expect(third).toMatchObject({ accepted: 0, replaced: 1, rejected: 0 });
    expect(Array.from((await loadObservations(series.id)).value)).toEqual([1, 5, 3]);
  });

  it('uses the lookup path for a few rows against a long record, and the merge path otherwise', async () => {
    const series = await freshSeries('long-record');
    const rows: [string, number][] = [];
    for (let i = 0; i < 3000; i++) rows.push([new Date(Date.UTC(2020, 0, 1) + i * 3_600_000).toISOString(), i]);
    expect((await ingestObservations({ series, source: 'upload', csv: csv(rows) })).accepted).toBe(3000);
    const few = await ingestObservations({
      series,
      source: 'push',
      points: [
        { time: rows[10][0], value: 10 },
        { time: rows[2000][0], value: -1 },
        { time: '2019-12-31T00:00:00Z', value: 7 },
      ],
    });
    expect(few).toMatchObject({ accepted: 1, duplicates: 1, rejected: 1 });
    const many = await ingestObservations({ series, source: 'upload', csv: csv(rows.map(([t, v], i) => [t, i === 2999 ? 0.5 : v])) });
    expect(many).toMatchObject({ accepted: 0, duplicates: 2999, rejected: 1 });
  });

  it('rejects a whole file with nothing usable and stores nothing', async () => {
    const series = await freshSeries('bad-file');
    const outcome = await ingestObservations({ series, source: 'upload', csv: 'time,value\n' });
    expect(outcome).toMatchObject({ status: 'rejected', accepted: 0 });
    expect(outcome.message).toContain('header line but no data rows');
    const allBad = await ingestObservations({ series, source: 'upload', csv: csv([['2024-01-01T00:00:00Z', 'NaN']]) });
    expect(allBad.status).toBe('rejected');
    expect(allBad.message).toContain('Nothing stored');
    expect((await loadObservations(series.id)).time.length).toBe(0);
    expect((await Series.findByPk(series.id))!.needsAnalysis).toBe(false);
  });

  it('refuses data for a retired series', async () => {
    const series = await freshSeries('retired-one');
    await series.update({ retiredAt: new Date() });
    const outcome = await ingestObservations({ series, source: 'push', points: [{ time: '2024-01-01T00:00:00Z', value: 1 }] });
    expect(outcome.status).toBe('rejected');
    expect(outcome.message).toContain('retired');
  });
});

describe('previewObservations', () => {
  it('detects layout and format and summarises without storing', async () => {
    const series = await freshSeries('preview-me');
    await ingestObservations({ series, source: 'push', points: [{ time: 1_700_000_000, value: 1 }].map((p) => ({ ...p, time: '2023-11-14T22:13:20Z' })) });
    const preview = await previewObservations(series, 'when;level\n1700000000;1\n1700003600;2\n1700007200;abc\n');
    expect(preview.layout).toMatchObject({ delimiter: ';', header: ['when', 'level'] });
    expect(preview.timeFormatGuess).toBe('epoch-seconds');
    expect(preview.sample.map((r) => r.line)).toEqual([2, 3, 4]);
    expect(preview.summary).toMatchObject({ rowsRead: 3, wouldAccept: 1, wouldBeDuplicates: 1, rejected: 1 });
    expect((await loadObservations(series.id)).time.length).toBe(1);
    const broken = await previewObservations(series, '\u0000\u0001\u0002garbage');
    expect(broken.fileError?.code).toBe('binary');
  });
});

describe('sweepStaleRuns', () => {
  it('marks a run whose holder died as failed, never a live one', async () => {
    await db();
    const series = await freshSeries('sweep-me');
    const dead = await IngestRun.create({
      seriesId: series.id,
      source: 'drop',
      fileName: 'x.csv',
      contentHash: null,
      status: 'running',
      userId: null,
      tokenId: null,
      durationMs: null,
      finishedAt: null,
      startedAt: new Date(Date.now() - 5000),
      report: { runKey: 'dead-key' },
    });
    const live = await IngestRun.create({
      seriesId: series.id,
      source: 'drop',
      fileName: 'y.csv',
      contentHash: null,
      status: 'running',
      userId: null,
      tokenId: null,
      durationMs: null,
      finishedAt: null,
      startedAt: new Date(Date.now() - 5000),
      report: { runKey: 'live-key' },
    });
    expect(await acquireLease('ingest-run:live-key', 60_000, 'another-process')).toBe(true);
    expect(await sweepStaleRuns()).toEqual([dead.id]);
    await dead.reload();
    await live.reload();
    expect(dead.status).toBe('failed');
    expect(dead.message).toContain('nothing from this run was stored');
    expect(live.status).toBe('running');
  });
});

describe('loadObservations', () => {
  it('returns every stored double bit for bit, for random bit patterns and the edge values of IEEE 754', async () => {
    // IEEE 754-2008 binary64: 17 significant digits identify every double (§5.12.2); the reader passes values
    // through text, so this is the property that matters. -0 is left out: SQLite stores it as 0 either way.
    const series = await freshSeries('exact-read');
    const bits = new DataView(new ArrayBuffer(8));
    let seed = 20261202;
    const next = () => (seed = (Math.imul(seed, 1103515245) + 12345) >>> 0);
    const values: number[] = [5e-324, 2.2250738585072014e-308, 1.7976931348623157e308, -1.7976931348623157e308, 0.1, 1 / 3, 2 ** 53 + 2, 0];
    while (values.length < 3000) {
      bits.setUint32(0, next());
      bits.setUint32(4, next());
      const v = bits.getFloat64(0);
      if (Number.isFinite(v) && !Object.is(v, -0)) values.push(v);
    }
    const sequelize = await db();
    await sequelize.query(
      `INSERT INTO observations (series_id, t, value) VALUES ${values.map((_, i) => `(${series.id}, ${1_700_000_000_000 + i * 60_000}, ?)`).join(',')}`,
      { replacements: values },
    );
    const read = await loadObservations(series.id);
    expect(read.time.length).toBe(values.length);
    const wrong = values.filter((v, i) => !Object.is(read.value[i], v));
    expect(wrong).toEqual([]);
    expect(read.time[values.length - 1]).toBe(1_700_000_000_000 + (values.length - 1) * 60_000);
  });

  it('reads records longer than one packed query (100,000 rows) whole and in order, and honours from, to and limit', async () => {
    const series = await freshSeries('long-read');
    const n = 250_003;
    const sequelize = await db();
    await sequelize.query(
      `WITH RECURSIVE k(i) AS (SELECT 0 UNION ALL SELECT i + 1 FROM k WHERE i < ${n - 1})
       INSERT INTO observations (series_id, t, value) SELECT ${series.id}, i * 1000, i * 0.5 - 7 FROM k`,
    );
    const all = await loadObservations(series.id);
    expect(all.time.length).toBe(n);
    expect(all.time.every((t, i) => i === 0 || t > all.time[i - 1])).toBe(true);
    expect([all.time[0], all.time[99_999], all.time[100_000], all.time[n - 1]]).toEqual([0, 99_999_000, 100_000_000, (n - 1) * 1000]);
    expect([all.value[100_000], all.value[n - 1]]).toEqual([100_000 * 0.5 - 7, (n - 1) * 0.5 - 7]);
    const part = await loadObservations(series.id, { from: 50_000_000, to: 210_000_000, limit: 150_000 });
    expect(part.time.length).toBe(150_000);
    expect([part.time[0], part.time[149_999]]).toEqual([50_000_000, 199_999_000]);
    expect((await loadObservations(series.id, { from: 240_000_500 })).time.length).toBe(n - 240_001);
  }, 60_000);

  it('notices a packed page whose instants do not strictly increase, which is then read again in order', () => {
    expect(unpackPage('1000,1.5;2000,-2;3000,0.25', false)).toMatchObject({ increasing: true, time: Float64Array.of(1000, 2000, 3000) });
    expect(unpackPage('2000,-2;1000,1.5;3000,0.25', false).increasing).toBe(false);
    expect(unpackPage('1000,1.5,1;1000,-2,4', true)).toMatchObject({ increasing: false, flag: Uint8Array.of(1, 4) });
  });
});
