import { beforeAll, describe, expect, it } from 'vitest';
import { useTempDataDir } from '../support/temp-db';

useTempDataDir();

import { migrateUp } from '@/migrations';
import { Alert, AnalysisSnapshot, Observation, Series, db } from '@/models';
import { acquireLease, releaseLease } from '@/lib/db/leases';
import { CURVES_KEPT, pruneSnapshotCurves, refreshSeriesAnalysis } from '@/lib/analysis/snapshot';
import { curvesOf, thinnedIndices } from '@/lib/analysis/curves';
import { runAnalysis } from '@/lib/engine/analyze';
import { analysisSettingsSchema } from '@/lib/engine/settings';
import { runAnalysisCycle } from '@/jobs/analysis';
import { evaluateSnapshots } from '@/lib/alerts/evaluate';
import { makeRule, makeSeries, makeSnapshot, makeUser } from './helpers';
import { foldRecord } from './fold';

beforeAll(async () => {
  await db();
  await migrateUp();
});

async function store(series: Series, rows: { t: number; value: number }[]) {
  await Observation.bulkCreate(rows.map((r) => ({ seriesId: series.id, ...r })));
  await series.update({ needsAnalysis: true, dataChangedAt: new Date() });
}

describe('thinning for charts', () => {
  it('keeps every stride-th point and always the last, never more than the maximum', () => {
    expect(thinnedIndices(5, 10)).toEqual({ stride: 1, indices: [0, 1, 2, 3, 4] });
    expect(thinnedIndices(10, 4)).toEqual({ stride: 3, indices: [0, 3, 6, 9] });
    expect(thinnedIndices(11, 4)).toEqual({ stride: 3, indices: [0, 3, 6, 10] });
    for (const n of [1999, 2000, 2001, 4001, 12_345]) {
      const { indices } = thinnedIndices(n);
      expect(indices.length).toBeLessThanOrEqual(2000);
      expect(indices[indices.length - 1]).toBe(n - 1);
    }
  });

  it('carries the per-point arrays of the result at the kept indices', async () => {
    const rows = foldRecord(300);
    const result = await runAnalysis(
      { time: Float64Array.from(rows, (r) => r.t), value: Float64Array.from(rows, (r) => r.value), intervalMs: 86_400_000 },
      analysisSettingsSchema.parse({ surrogates: 20, indicators: ['ac1', 'variance'] }),
      { parallel: false },
    );
    const curves = curvesOf(result, 100);
    expect(curves.stride).toBe(3);
    expect(curves.time).toHaveLength(100);
    expect(curves.time[1]).toBe(result.series.time[3]);
    expect(curves.indicators.ac1[99]).toBe(result.indicators.ac1![result.n - 1]);
    expect(curves.surrogateTaus.ac1).toEqual(result.significance.ac1!.taus);
  });
});

describe('refreshSeriesAnalysis', () => {
  it('stores an ok snapshot with a small summary and the span the settings ask for', async () => {
    const series = await makeSeries();
    await series.update({ settings: { surrogates: 30, spanPoints: 200 } });
    await store(series, foldRecord(400));
    const snapshot = await refreshSeriesAnalysis(series);
    expect(snapshot).toMatchObject({ status: 'ok', error: null, n: 200 });
    expect(Number(snapshot.dataTo)).toBe(foldRecord(400)[399].t);
    const summary = snapshot.summary as { significance: { ac1: Record<string, unknown> }; kendall: { ac1: { tau: number } } };
    expect(summary.significance.ac1).not.toHaveProperty('taus');
    expect(summary.kendall.ac1.tau).toBeGreaterThan(0.3);
    expect((snapshot.curves as { surrogateTaus: { ac1: number[] } }).surrogateTaus.ac1).toHaveLength(30);
  });

  it('stores an error snapshot with the engine message when the record cannot be analysed', async () => {
    const series = await makeSeries();
    await store(series, foldRecord(5));
    const snapshot = await refreshSeriesAnalysis(series);
    expect(snapshot).toMatchObject({ status: 'error', curves: null, n: 5 });
    expect(snapshot.error).toMatch(/at least 8/);
  });
});

describe('the analysis cycle', () => {
  it('analyses flagged series, clears the flag, and hands the snapshots to the rules', async () => {
    const lead = await makeUser('lead');
    const series = await makeSeries();
    await series.update({ settings: { surrogates: 50 } });
    await makeRule(series, lead, { maxSurrogateP: 0.1 });
    await store(series, foldRecord(400));
    const cycle = await runAnalysisCycle();
    expect(cycle.snapshots.map((s) => s.seriesId)).toContain(series.id);
    await series.reload();
    expect(series.needsAnalysis).toBe(false);
    expect(await Alert.count({ where: { seriesId: series.id } })).toBe(1);
    // Nothing new: the next cycle leaves the series alone.
    expect((await runAnalysisCycle()).snapshots.map((s) => s.seriesId)).not.toContain(series.id);
  });

  it('skips a series another scheduler holds, and keeps the flag when data arrived during the analysis', async () => {
    const series = await makeSeries();
    await store(series, foldRecord(200));
    expect(await acquireLease(`analysis:${series.id}`, 60_000, 'other-scheduler')).toBe(true);
    expect((await runAnalysisCycle()).snapshots.map((s) => s.seriesId)).not.toContain(series.id);
    await releaseLease(`analysis:${series.id}`, 'other-scheduler');

    // Data arriving mid-analysis moves dataChangedAt; the flag must survive so the next cycle sees the new data.
    // (The snapshot is written in one transaction with the flag; an intake committing meanwhile is simulated in it.)
    const original = series.dataChangedAt!;
    const moved = new Date(original.getTime() + 1000);
    AnalysisSnapshot.addHook('beforeCreate', 'simulate-arrival', async (_snapshot, options) => {
      await Series.update({ dataChangedAt: moved }, { where: { id: series.id }, transaction: options.transaction });
    });
    try {
      await runAnalysisCycle();
    } finally {
      AnalysisSnapshot.removeHook('beforeCreate', 'simulate-arrival');
    }
    await series.reload();
    expect(series.needsAnalysis).toBe(true);
    await runAnalysisCycle();
    await series.reload();
    expect(series.needsAnalysis).toBe(false);
  });
});

describe('snapshot housekeeping', () => {
  it('keeps curves on the newest snapshots and on those alerts point at, and drops the rest', async () => {
    const lead = await makeUser('lead');
    const series = await makeSeries();
    await makeRule(series, lead);
    const snapshots = [];
    for (let k = 0; k < 9; k++) {
      const snapshot = await makeSnapshot(series, { tau: k === 1 ? 0.6 : 0.1, surrogateP: 0.01 });
      await snapshot.update({ curves: { stride: 1, time: [k] }, chartView: { n: k } });
      snapshots.push(snapshot);
    }
    const { opened } = await evaluateSnapshots([snapshots[1]]);
    expect(opened).toHaveLength(1);
    expect(await pruneSnapshotCurves(series.id)).toBe(9 - CURVES_KEPT - 1);
    const after = await AnalysisSnapshot.findAll({ where: { seriesId: series.id }, order: [['id', 'ASC']] });
    expect(after.map((s) => s.curves !== null)).toEqual([false, true, false, false, true, true, true, true, true]);
    // the saved chart view goes with the curves it was drawn from
    expect(after.map((s) => s.chartView !== null)).toEqual([false, true, false, false, true, true, true, true, true]);
  });

  it('judges, on the next cycle, a latest snapshot that a rule has not judged yet', async () => {
    const lead = await makeUser('lead');
    const series = await makeSeries();
    const snapshot = await makeSnapshot(series, { tau: 0.6, surrogateP: 0.01 });
    await makeRule(series, lead);
    await runAnalysisCycle();
    expect(await Alert.count({ where: { seriesId: series.id, firstSnapshotId: snapshot.id } })).toBe(1);
  });
});
