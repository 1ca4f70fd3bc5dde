import { beforeAll, describe, expect, it } from 'vitest';
import { useTempDataDir } from '../support/temp-db';

useTempDataDir();

import { migrateUp } from '@/migrations';
import { Observation, SeriesAnalysisState, db, type AnalysisSnapshot, type Series } from '@/models';
import { refreshSeriesAnalysis } from '@/lib/analysis/snapshot';
import { loadAnalysisState, packState, unpackState } from '@/lib/analysis/state';
import { RandomStream } from '@/lib/engine/random';
import { makeSeries } from '../alerts/helpers';

const DAY = 86_400_000;
const T0 = Date.UTC(2010, 0, 1);

beforeAll(async () => {
  await db();
  await migrateUp();
});

function rows(from: number, to: number, seed: number) {
  const out: { t: number; value: number }[] = [];
  for (let i = from; i < to; i++) out.push({ t: T0 + i * DAY, value: 10 + (1 + i / 400) * new RandomStream(seed, i).normal() });
  return out;
}

async function store(series: Series, list: { t: number; value: number }[]) {
  await Observation.bulkCreate(list.map((r) => ({ seriesId: series.id, ...r })));
  await series.update({ needsAnalysis: true, dataChangedAt: new Date() });
}

type Summary = { kendall: Record<string, { tau: number; p: number }>; significance: Record<string, { p: number; drawn: { n: number } }> };

async function fullOf(series: Series): Promise<AnalysisSnapshot> {
  process.env.ANALYSIS_INCREMENTAL = '0';
  try {
    return await refreshSeriesAnalysis(series, { parallel: false });
  } finally {
    delete process.env.ANALYSIS_INCREMENTAL;
  }
}

describe('snapshots of a growing record', () => {
  it('continue from the kept state, say so in the provenance, and match a full recomputation to 1e-9', async () => {
    const series = await makeSeries();
    await series.update({ intervalMs: DAY, settings: { detrend: 'gaussian', bandwidth: '15 points', window: '80 points', surrogates: 19 } });
    await store(series, rows(0, 400, 1));
    const first = await refreshSeriesAnalysis(series, { parallel: false });
    expect(first.provenance!.update).toMatchObject({ mode: 'full', reason: expect.stringMatching(/no earlier analysis/), basedOnSnapshot: null });
    expect((await loadAnalysisState(series.id))!.snapshotId).toBe(first.id);

    await store(series, rows(400, 401, 1));
    const next = await refreshSeriesAnalysis(series, { parallel: false, markAnalysed: {} });
    expect(next.provenance!.update).toMatchObject({ mode: 'incremental', basedOnSnapshot: first.id });
    await series.reload();
    expect(series.needsAnalysis).toBe(false);
    const full = await fullOf(series);
    expect(full.provenance!.update).toMatchObject({ mode: 'full', reason: expect.stringMatching(/switched off/) });
    const [u, f] = [next.summary as Summary, full.summary as Summary];
    for (const name of Object.keys(f.kendall)) {
      expect(Math.abs(u.kendall[name].tau - f.kendall[name].tau)).toBeLessThanOrEqual(1e-9);
      expect(Math.abs(u.kendall[name].p - f.kendall[name].p)).toBeLessThanOrEqual(1e-9);
      // The kept surrogates were drawn on the 400-point record; the full one drew its own on 401.
      expect(u.significance[name].drawn.n).toBe(400);
      expect(f.significance[name].drawn.n).toBe(401);
    }
    // The full analysis left no state (updates were off), so the next one is full again, then incremental.
    await store(series, rows(401, 402, 1));
    expect((await refreshSeriesAnalysis(series, { parallel: false })).provenance!.update!.mode).toBe('full');
  });

  it('a replaced value already analysed forces a full recomputation', async () => {
    const series = await makeSeries();
    await series.update({ intervalMs: DAY, settings: { detrend: 'none', window: '50 points' } });
    await store(series, rows(0, 300, 2));
    await refreshSeriesAnalysis(series, { parallel: false });
    await Observation.update({ value: 99 }, { where: { seriesId: series.id, t: T0 + 100 * DAY } });
    await store(series, rows(300, 301, 2));
    expect((await refreshSeriesAnalysis(series, { parallel: false })).provenance!.update).toMatchObject({
      mode: 'full',
      reason: expect.stringMatching(/values already analysed changed/),
    });
  });

  it('settings that never allow an update keep no state', async () => {
    const series = await makeSeries();
    await store(series, rows(0, 300, 3));
    const snapshot = await refreshSeriesAnalysis(series, { parallel: false });
    expect(snapshot.provenance!.update).toMatchObject({ mode: 'full', reason: expect.stringMatching(/fraction/) });
    expect(await SeriesAnalysisState.count({ where: { seriesId: series.id } })).toBe(0);
  });

  it('the packed state reads back bit for bit', async () => {
    const series = await makeSeries();
    await series.update({
      intervalMs: DAY,
      settings: { detrend: 'moving-average', window: '40 points', surrogates: 5, indicators: ['ac1', 'restoring-rate'], maxEvaluatedWindows: 100000 },
    });
    await store(series, rows(0, 200, 4));
    await refreshSeriesAnalysis(series, { parallel: false });
    const { state } = (await loadAnalysisState(series.id))!;
    const again = unpackState(packState(state));
    expect(again).toEqual(state);
    expect(Buffer.from(again.trend.buffer).equals(Buffer.from(state.trend.buffer))).toBe(true);
    expect(Object.keys(again.companions['restoring-rate'])).toEqual(['standardError']);
  });
});
