import { brinkwatch } from '../support/cli';
import { createHash } from 'node:crypto';
import { mkdtempSync, writeFileSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { useTempDataDir } from '../support/temp-db';

useTempDataDir('bw-provenance-');
const { migrateUp } = await import('@/migrations');
const { AnalysisSnapshot, Observation, Series, User, closeDatabase, db } = await import('@/models');
const { createSeries } = await import('@/lib/series/registry');
const { refreshSeriesAnalysis } = await import('@/lib/analysis/snapshot');
const { snapshotDataCsv, canonicalObservationsBytes, canonicalObservationsCsv } = await import('@/lib/analysis/provenance');
const { ingestObservations } = await import('@/lib/intake/pipeline');
const { createMark } = await import('@/lib/marks/write');
const { simulateAr1 } = await import('@/lib/demo/models');
const { ENGINE_VERSION } = await import('@/lib/engine/version');
const { RandomStream } = await import('@/lib/engine/random');

const DAY = 86_400_000;
const START = Date.UTC(2024, 0, 1);
const N = 700;
const csvOf = (times: number[], values: Float64Array | number[], from: number, to: number) =>
  `time,value\n${times
    .slice(from, to)
    .map((t, i) => `${new Date(t).toISOString()},${values[from + i]}`)
    .join('\n')}\n`;

let seriesId: number;
let snapshotId: number;
let runIds: number[];

beforeAll(async () => {
  await migrateUp();
  await db();
  const lead = await User.create({ email: 'lead@example.test', name: 'Lead', role: 'lead', passwordHash: null });
  // A daily record with a slowing-down trend in its second half, delivered by two uploads, a maintenance break inside
  // the span, 99 surrogates and the live defaults: every input the engine takes from the database is exercised.
  const series = await createSeries(
    { slug: 'pond-oxygen', name: 'Pond oxygen', intervalMs: DAY, settings: { surrogates: 99, span: '600 points', seed: 7 } },
    null,
  );
  seriesId = series.id;
  const calm = simulateAr1({ n: N / 2, phi: 0.3, sigma: 1, mean: 8, seed: 3 });
  const slowing = simulateAr1({ n: N / 2, phi: 0.9, sigma: 1, mean: 8, seed: 4 });
  const values = [...calm, ...slowing].map((v, i) => v + i * 1e-3 + (i % 97 === 0 ? 1 / 3 : 0));
  const times = Array.from({ length: N }, (_, i) => START + i * DAY);
  runIds = [];
  for (const [from, to] of [
    [0, 400],
    [400, N],
  ]) {
    const outcome = await ingestObservations({ series, source: 'upload', fileName: `part-${from}.csv`, csv: csvOf(times, values, from, to) });
    expect(outcome.status).toBe('succeeded');
    runIds.push(outcome.runId);
  }
  await createMark(series.id, { at: times[250], note: 'probe swapped', kind: 'maintenance' }, lead);
  const stored = await Series.findByPk(series.id);
  const snapshot = await refreshSeriesAnalysis(stored!);
  expect(snapshot.status).toBe('ok');
  snapshotId = snapshot.id;
});
afterAll(async () => {
  await closeDatabase();
});

describe('an analysis records where its numbers came from and can be reproduced from its download', () => {
  it('records the hash of the canonical observations, the runs, the engine version, the interval, breaks and seed', async () => {
    const snapshot = (await AnalysisSnapshot.findByPk(snapshotId))!;
    const p = snapshot.provenance!;
    expect(p.canonicalForm).toBe('brinkwatch-observations-csv-v1');
    expect(p.ingestRuns).toEqual(runIds);
    expect(p.rowsWithoutRun).toBe(0);
    expect(p.engineVersion).toBe(ENGINE_VERSION);
    expect(p.seed).toBe(7);
    expect(p.intervalMs).toBe(DAY);
    expect(p.breaks).toEqual([{ time: START + 250 * DAY, kind: 'maintenance' }]);
    // The span is 600 points counted back from the last reading (one interval to spare): rows from day 99 on.
    expect(Number(snapshot.dataFrom)).toBe(START + 99 * DAY);
    expect(p.rows).toBe(N - 99);
  });

  it('the download is the canonical rows under # lines, and `sha256sum` of its rows is the recorded hash', async () => {
    const download = await snapshotDataCsv(snapshotId);
    expect(download.matches).toBe(true);
    const lines = download.csv.split('\n');
    const comments = lines.filter((l) => l.startsWith('#'));
    expect(comments.some((l) => l.startsWith('# settings: {'))).toBe(true);
    expect(comments.some((l) => l.startsWith('# input: {'))).toBe(true);
    expect(comments.some((l) => l.startsWith('# caution: '))).toBe(true);
    const body = lines.filter((l) => !l.startsWith('#')).join('\n');
    // SHA-256 from Node's crypto (OpenSSL), the same digest `grep -v '^#' FILE | sha256sum` prints (FIPS 180-4).
    const digest = createHash('sha256').update(body, 'utf8').digest('hex');
    expect(digest).toBe((await AnalysisSnapshot.findByPk(snapshotId))!.provenance!.dataSha256);
    expect(body.startsWith('time,value\n2024-04-09T00:00:00.000Z,')).toBe(true);
  });

  it('the command line on the download gives every tau and p of the stored analysis to 1e-12', async () => {
    const download = await snapshotDataCsv(snapshotId);
    const dir = mkdtempSync(path.join(os.tmpdir(), 'bw-reproduce-'));
    const file = path.join(dir, download.fileName);
    writeFileSync(file, download.csv);
    const run = brinkwatch(['analyze', file, '--summary']);
    expect(run.stderr).toBe('');
    expect(run.status).toBe(0);
    const cli = JSON.parse(run.stdout) as { kendall: Record<string, { tau: number; p: number }>; significance: Record<string, { p: number }> };
    const summary = (await AnalysisSnapshot.findByPk(snapshotId))!.summary as typeof cli & { stretch: { startsAfter: string } };
    expect(summary.stretch.startsAfter).toBe('maintenance');
    const indicators = Object.keys(summary.kendall);
    expect(indicators.length).toBeGreaterThan(3);
    for (const name of indicators) {
      expect(Math.abs(cli.kendall[name].tau - summary.kendall[name].tau), `${name} tau`).toBeLessThanOrEqual(1e-12);
      expect(Math.abs(cli.kendall[name].p - summary.kendall[name].p), `${name} Kendall p`).toBeLessThanOrEqual(1e-12);
    }
    const tested = Object.keys(summary.significance);
    expect(tested.length).toBeGreaterThan(0);
    for (const name of tested) {
      expect(Math.abs(cli.significance[name].p - summary.significance[name].p), `${name} surrogate p`).toBeLessThanOrEqual(1e-12);
    }
  }, 180_000);

  it('still hands out the analysed rows after reprocessing replaced a value: they are rebuilt at the analysed data version', async () => {
    const series = (await Series.findByPk(seriesId))!;
    await series.update({ duplicatePolicy: 'replace' });
    const at = new Date(START + 500 * DAY).toISOString();
    expect((await ingestObservations({ series, source: 'upload', fileName: 'fix.csv', csv: `time,value\n${at},42\n` })).status).toBe('succeeded');
    const download = await snapshotDataCsv(snapshotId);
    expect(download.matches).toBe(true);
    expect(download.csv).not.toMatch(/^# warning:/m);
    expect(download.csv).not.toContain(`${at},42\n`);
  });

  it('says so when a flag in the analysed range changed after the analysis without new data (no data version records that)', async () => {
    await Observation.update({ flag: 4 }, { where: { seriesId, t: START + 450 * DAY } });
    const download = await snapshotDataCsv(snapshotId);
    expect(download.matches).toBe(false);
    expect(download.csv).toMatch(/^# warning: values or flags in this range changed after the analysis/m);
  });

  it('lists only the runs whose rows were analysed: a run whose only row failed QC (flag 4) is not among them', async () => {
    const series = await createSeries({ slug: 'pond-level', name: 'Pond level', intervalMs: DAY, settings: { surrogates: 0, span: null } }, null);
    const values = simulateAr1({ n: 200, phi: 0.5, sigma: 1, mean: 2, seed: 8 });
    const times = Array.from({ length: 200 }, (_, i) => START + i * DAY);
    const main = await ingestObservations({ series, source: 'upload', fileName: 'main.csv', csv: csvOf(times, values, 0, 199) });
    const late = await ingestObservations({ series, source: 'upload', fileName: 'late.csv', csv: csvOf(times, values, 199, 200) });
    // The last reading fails QC (QARTOD flag 4): the analysis, its hash and its provenance leave it out.
    await Observation.update({ flag: 4 }, { where: { seriesId: series.id, t: times[199] } });
    const snapshot = await refreshSeriesAnalysis((await Series.findByPk(series.id))!);
    expect(snapshot.provenance!.rows).toBe(199);
    expect(snapshot.provenance!.ingestRuns).toEqual([main.runId]);
    expect(snapshot.provenance!.ingestRuns).not.toContain(late.runId);
  });

  it('writes the canonical form by its definition: ISO 8601 UTC with milliseconds, shortest round-trip values', () => {
    // ECMA-262 Number::toString gives the shortest decimal that reads back to the same double (0.1 + 0.2 → 0.30000000000000004).
    expect(canonicalObservationsCsv(Float64Array.of(0, Date.UTC(-12000, 0, 1)), Float64Array.of(0.1 + 0.2, -1e-7))).toBe(
      'time,value\n1970-01-01T00:00:00.000Z,0.30000000000000004\n-012000-01-01T00:00:00.000Z,-1e-7\n',
    );
  });

  it('writes every instant a Date holds as the platform writes it (ECMA-262 Date.prototype.toISOString), and hashes those bytes', () => {
    const rng = new RandomStream(41, 0);
    const limit = 8.64e15;
    const edges = [0, -1, 1, Date.UTC(0, 0, 1) - 1, Date.UTC(9999, 11, 31, 23, 59, 59, 999), Date.UTC(9999, 11, 31, 23, 59, 59, 999) + 1, -limit, limit];
    const time = Float64Array.from({ length: 5000 }, (_, i) => (i < edges.length ? edges[i] : Math.round((rng.uniform() * 2 - 1) * (i % 2 ? limit : 4e12))));
    const value = Float64Array.from(time, () => (rng.uniform() - 0.5) * 10 ** Math.floor(rng.uniform() * 40 - 20));
    const expected = `time,value\n${Array.from(time, (t, i) => `${new Date(t).toISOString()},${String(value[i])}\n`).join('')}`;
    expect(canonicalObservationsCsv(time, value)).toBe(expected);
    expect(canonicalObservationsBytes(time, value).equals(Buffer.from(expected, 'utf8'))).toBe(true);
  });
});
