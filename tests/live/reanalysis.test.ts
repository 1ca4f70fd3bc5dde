import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { useTempDataDir } from '../support/temp-db';

useTempDataDir('bw-reanalysis-');
const { migrateUp } = await import('@/migrations');
const { AnalysisSnapshot, Reanalysis, Series, User, closeDatabase, db } = await import('@/models');
const { createSeries } = await import('@/lib/series/registry');
const { refreshSeriesAnalysis } = await import('@/lib/analysis/snapshot');
const { reanalyseSeries, dataVersionsOverview } = await import('@/lib/analysis/reanalysis');
const { ingestObservations } = await import('@/lib/intake/pipeline');
const { observationVersions } = await import('@/lib/intake/versions');
const { simulateAr1 } = await import('@/lib/demo/models');
const { UnprocessableError } = await import('@/lib/http/errors');

const DAY = 86_400_000;
const START = Date.UTC(2023, 0, 1);
const N = 500;
const times = Array.from({ length: N + 20 }, (_, i) => START + i * DAY);
const csvOf = (values: ArrayLike<number>, from: number, to: number) =>
  `time,value\n${times
    .slice(from, to)
    .map((t, i) => `${new Date(t).toISOString()},${values[from + i]}`)
    .join('\n')}\n`;

type Summary = { kendall: Record<string, { tau: number | null; p: number | null }>; significance: Record<string, { p: number | null }> };

let lead: InstanceType<typeof User>;
let seriesId: number;
let before: InstanceType<typeof AnalysisSnapshot>;
let after: InstanceType<typeof AnalysisSnapshot>;

beforeAll(async () => {
  await migrateUp();
  await db();
  lead = await User.create({ email: 'lead@example.test', name: 'Lead', role: 'lead', passwordHash: null });
  // A daily record whose second half slows down, delivered in two runs (data versions 1 and 2), analysed with 49
  // surrogates over the trailing 400 points.
  const series = await createSeries(
    { slug: 'reservoir-temp', name: 'Reservoir temperature', intervalMs: DAY, settings: { surrogates: 49, span: '400 points', seed: 11 } },
    null,
  );
  seriesId = series.id;
  const values = [
    ...simulateAr1({ n: N / 2, phi: 0.3, sigma: 1, mean: 12, seed: 5 }),
    ...simulateAr1({ n: N / 2 + 20, phi: 0.9, sigma: 1, mean: 12, seed: 6 }),
  ];
  for (const [from, to] of [
    [0, 300],
    [300, N],
  ]) {
    expect((await ingestObservations({ series, source: 'drop', fileName: `part-${from}.csv`, csv: csvOf(values, from, to) })).status).toBe('succeeded');
  }
  before = await refreshSeriesAnalysis((await Series.findByPk(seriesId))!);
  expect(before.status).toBe('ok');
  // Reprocessing: the provider sends days 200-449 again with a drift correction (version 3), then new days arrive
  // by push (version 4).
  await series.update({ duplicatePolicy: 'replace' });
  const corrected = Array.from(values, (v, i) => v - 0.002 * i);
  const reprocessed = await ingestObservations({
    series,
    source: 'upload',
    fileName: 'reprocessed.csv',
    csv: csvOf(corrected, 200, 450),
    actor: lead,
    reason: 'drift of the thermistor corrected by the provider',
  });
  expect(reprocessed.replaced).toBe(250);
  const pushed = await ingestObservations({
    series,
    source: 'push',
    points: times.slice(N, N + 20).map((t, i) => ({ time: new Date(t).toISOString(), value: values[N + i] })),
  });
  expect(pushed.accepted).toBe(20);
  after = await refreshSeriesAnalysis((await Series.findByPk(seriesId))!);
  expect(after.status).toBe('ok');
}, 240_000);
afterAll(async () => {
  await closeDatabase();
});

/** Every Kendall tau and p and every surrogate p of two summaries, side by side. */
function numbers(summary: unknown): [string, number | null][] {
  const { kendall, significance } = summary as Summary;
  return [
    ...Object.entries(kendall).flatMap(([name, k]): [string, number | null][] => [
      [`${name} tau`, k.tau],
      [`${name} Kendall p`, k.p],
    ]),
    ...Object.entries(significance).map(([name, s]): [string, number | null] => [`${name} surrogate p`, s.p]),
  ];
}

describe('re-analysis on an earlier data version (reference: the snapshot stored before the values were replaced)', () => {
  it('records the data version each live analysis read', () => {
    expect(before.provenance!.dataVersion).toBe(2);
    expect(after.provenance!.dataVersion).toBe(4);
    expect(after.provenance!.dataSha256).not.toBe(before.provenance!.dataSha256);
    // The replacement moved the numbers, or this test would prove nothing.
    expect(numbers(after.summary)).not.toEqual(numbers(before.summary));
  });

  it('keeps the earlier values with who, when and why', async () => {
    const earlier = await observationVersions(seriesId, {});
    expect(earlier).toHaveLength(250);
    expect(earlier.every((v) => v.replacedBy.userId === lead.id && v.replacedBy.fileName === 'reprocessed.csv')).toBe(true);
    const overview = await dataVersionsOverview((await Series.findByPk(seriesId))!);
    expect(overview.currentVersion).toBe(4);
    expect(overview.versions.find((v) => v.version === 3)).toMatchObject({
      replaced: 250,
      inserted: 0,
      reason: 'drift of the thermistor corrected by the provider',
    });
  });

  it('on version 2 gives exactly every tau and p of the analysis stored before the replacement, on the same data', async () => {
    const snapshotsBefore = await AnalysisSnapshot.count({ where: { seriesId } });
    const redo = await reanalyseSeries((await Series.findByPk(seriesId))!, 2, lead);
    expect(redo.status).toBe('ok');
    expect(redo.dataVersion).toBe(2);
    expect(redo.onCurrentVersion).toBe(false);
    expect(redo.dataSha256).toBe(before.provenance!.dataSha256);
    expect(redo.sameDataAsSnapshot).toBe(before.id);
    const stored = (await Reanalysis.findByPk(redo.id))!;
    expect(stored.provenance.ingestRuns).toEqual(before.provenance!.ingestRuns);
    expect([stored.n, stored.dataFrom, stored.dataTo].map(Number)).toEqual([before.n, before.dataFrom, before.dataTo].map(Number));
    // Bit for bit: the same doubles in, the same seed, the same engine.
    expect(numbers(stored.summary)).toEqual(numbers(before.summary));
    expect(numbers(stored.summary).length).toBeGreaterThan(6);
    // Kept apart: no live snapshot was added, so rules and the series page still judge the analysis of version 4.
    expect(await AnalysisSnapshot.count({ where: { seriesId } })).toBe(snapshotsBefore);
    const latest = await AnalysisSnapshot.findOne({ where: { seriesId }, order: [['id', 'DESC']] });
    expect(latest!.id).toBe(after.id);
  }, 120_000);

  it('on the current version gives the live analysis again, still kept apart', async () => {
    const redo = await reanalyseSeries((await Series.findByPk(seriesId))!, 4, lead);
    expect(redo.onCurrentVersion).toBe(true);
    expect(redo.sameDataAsSnapshot).toBe(after.id);
    expect(numbers((await Reanalysis.findByPk(redo.id))!.summary)).toEqual(numbers(after.summary));
  }, 120_000);

  it('refuses a version the series has not reached, naming the field', async () => {
    const refused = reanalyseSeries((await Series.findByPk(seriesId))!, 5, lead);
    await expect(refused).rejects.toBeInstanceOf(UnprocessableError);
    await expect(refused).rejects.toMatchObject({ fields: { version: [expect.stringContaining('data version 4')] } });
  });
});
