import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { useTempDataDir } from '../support/temp-db';

useTempDataDir('bw-live-snapshot-');
const { migrateUp } = await import('@/migrations');
const { Observation, User, closeDatabase, db } = await import('@/models');
const { createSeries } = await import('@/lib/series/registry');
const { refreshSeriesAnalysis } = await import('@/lib/analysis/snapshot');
const { analyseStored } = await import('@/lib/analysis/preview');
const { listMarks } = await import('@/lib/marks/read');
const { createMark } = await import('@/lib/marks/write');
const { markCreateSchema } = await import('@/lib/schemas/backtest');
const { LIVE_SETTINGS_DEFAULTS, seriesCreateSchema, seriesUpdateSchema } = await import('@/lib/schemas/series');
const { benjaminiHochberg } = await import('@/lib/engine/fdr');
const { simulateAr1 } = await import('@/lib/demo/models');
const { completeSavedView } = await import('@/lib/analysis/view');

const DAY = 86_400_000;
const LAST = Date.UTC(2030, 0, 1);
let lead: { id: number };

async function dailySeries(slug: string, n: number, settings: Record<string, unknown>) {
  const series = await createSeries({ slug, name: slug, intervalMs: DAY, settings }, null);
  const values = simulateAr1({ n, phi: 0.5, sigma: 1, mean: 10, seed: series.id });
  const times = Array.from({ length: n }, (_, i) => LAST - (n - 1 - i) * DAY);
  await Observation.bulkCreate(times.map((t, i) => ({ seriesId: series.id, t, value: values[i] })));
  return { series, times };
}

type Summary = { stretch: { from: number; to: number; startsAfter: string }; shifts: unknown[] };

beforeAll(async () => {
  await migrateUp();
  await db();
  lead = await User.create({ email: 'lead@example.test', name: 'Lead', role: 'lead', passwordHash: null });
});
afterAll(async () => {
  await closeDatabase();
});

describe('new-series defaults', () => {
  it('run surrogates, a span in points, shift detection and a coverage floor; omitted fields take them on create and update', () => {
    const created = seriesCreateSchema.parse({ slug: 'defaults', name: 'Defaults' }).settings;
    expect(created).toMatchObject({ surrogates: 199, span: '1000 points', window: 0.5, bandwidth: 0.1, shiftDetection: 'on', minCoverage: 0.8 });
    expect(seriesCreateSchema.parse({ slug: 'partial', name: 'Partial', settings: { window: 'P90D' } }).settings).toMatchObject({
      surrogates: 199,
      window: 'P90D',
    });
    expect(seriesUpdateSchema.parse({ settings: { window: 0.3 } }).settings).toMatchObject({ surrogates: 199, span: '1000 points' });
    // A legacy spanPoints names the span itself and is not overridden by the default span.
    expect(seriesUpdateSchema.parse({ settings: { spanPoints: 300 } }).settings).toMatchObject({ span: '300 points' });
  });

  it('let Benjamini–Hochberg pass the smallest possible surrogate p over 10 series at q = 0.05, where 99 surrogates cannot', () => {
    // The step-up rule (Benjamini & Hochberg 1995, JRSS B 57:289) passes p_(1) only if p_(1) ≤ q/m; a surrogate p is
    // at least 1/(N + 1), so N ≥ m/q − 1 = 199 for m = 10, q = 0.05. lib/engine/fdr.ts is checked against scipy.
    const family = (n: number) => [1 / (n + 1), ...Array(9).fill(1)];
    expect(benjaminiHochberg(family(LIVE_SETTINGS_DEFAULTS.surrogates), 0.05).rejected[0]).toBe(true);
    expect(benjaminiHochberg(family(99), 0.05).rejected[0]).toBe(false);
  });
});

describe('marks as breaks of the live analysis', () => {
  it('judges only the stretch after a maintenance break inside the span, and reads only the span', async () => {
    const { series, times } = await dailySeries('after-maintenance', 600, { span: 'P500D', window: 0.5, surrogates: 20 });
    await createMark(series.id, markCreateSchema.parse({ at: times[400] - 3_600_000, note: 'probe swapped', kind: 'maintenance' }), lead);
    const snapshot = await refreshSeriesAnalysis(series, { parallel: false });
    expect(snapshot.status, snapshot.error ?? '').toBe('ok');
    const summary = snapshot.summary as unknown as Summary;
    // The first grid point at or after the break opens the stretch (CONTRACT: breaks).
    expect(summary.stretch).toEqual({ from: times[400], to: LAST, startsAfter: 'maintenance' });
    expect(snapshot.n).toBe(200);
    // P500D back from the last reading: 501 readings read, one to spare for the engine's own span cut.
    expect(Number(snapshot.dataFrom)).toBe(LAST - 500 * DAY);
    // The preview analyses the same stretch.
    const preview = await analyseStored(series, series.settings as never);
    expect(preview.stretch).toEqual(summary.stretch);
  });

  it('draws a chart view saved before shifts, stretch and directions were recorded', async () => {
    const { series } = await dailySeries('older-view', 300, { window: 0.5, surrogates: 10, indicators: ['ac1'] });
    const snapshot = await refreshSeriesAnalysis(series, { parallel: false });
    const { shifts: _s, stretch: _t, ...old } = snapshot.chartView as Record<string, unknown>;
    const oldKendall = { ac1: { tau: 0.1, p: 0.2 } };
    const oldSignificance = { ac1: { p: 0.3, count: 10, method: 'ar1', bins: [] } };
    const view = completeSavedView({ ...old, kendall: oldKendall, significance: oldSignificance } as never);
    expect(view.shifts).toEqual([]);
    expect(view.stretch).toBeNull();
    // The engine before directions tested every indicator in the upper tail.
    expect(view.kendall.ac1?.direction).toBe('rising');
    expect(view.significance.ac1?.direction).toBe('rising');
  });

  it('ignores a mark before the span and one after the last reading', async () => {
    const { series, times } = await dailySeries('marks-outside', 600, { span: '300 points', window: 0.5, surrogates: 0 });
    await createMark(series.id, markCreateSchema.parse({ at: times[100], note: 'long ago' }), lead);
    await createMark(series.id, markCreateSchema.parse({ at: LAST + 5 * DAY, note: 'sensor to be replaced', kind: 'maintenance' }), lead);
    const snapshot = await refreshSeriesAnalysis(series, { parallel: false });
    const summary = snapshot.summary as unknown as Summary;
    expect(summary.stretch.startsAfter).toBe('span');
    expect(summary.stretch.from).toBe(times[300]);
  });

  it('keeps maintenance breaks out of the tipping points backtests score against', async () => {
    const { series, times } = await dailySeries('both-kinds', 50, {});
    await series.update({ needsAnalysis: false });
    const made = await createMark(series.id, markCreateSchema.parse({ at: times[10], note: 'collapse' }), lead);
    expect(made.kind).toBe('tipping-point');
    // A new mark moves where the live analysis starts, so the series is analysed again on the next cycle.
    await series.reload();
    expect(series.needsAnalysis).toBe(true);
    await createMark(series.id, markCreateSchema.parse({ at: times[20], kind: 'maintenance' }), lead);
    expect((await listMarks(series.id)).map((t) => t.kind)).toEqual(['tipping-point']);
    expect((await listMarks(series.id, ['tipping-point', 'maintenance'])).map((t) => t.kind)).toEqual(['tipping-point', 'maintenance']);
    expect(markCreateSchema.safeParse({ at: times[0], kind: 'repair' }).success).toBe(false);
  });
});
