import { beforeAll, describe, expect, it } from 'vitest';
import { useTempDataDir } from '../support/temp-db';

useTempDataDir('bw-site-analysis-');

const { migrateDown, migrateUp } = await import('@/migrations');
const { Series, SiteSnapshot, User, db } = await import('@/models');
const { createSeries } = await import('@/lib/series/registry');
const { createSite } = await import('@/lib/sites/registry');
const { ingestObservations } = await import('@/lib/intake/pipeline');
const { runAnalysisCycle } = await import('@/jobs/analysis');
const { dueSites, fetchSiteAnalysis, siteAnalysisSettings } = await import('@/lib/sites/analysis');
const { commonGrid } = await import('@/lib/engine/common-grid');
const { runSiteAnalysis } = await import('@/lib/engine/site');
const { detrend } = await import('@/lib/engine/detrend');
const { simulateAr1 } = await import('@/lib/demo/models');

const HOUR = 3_600_000;
const T0 = Date.UTC(2024, 0, 1);
const csvOf = (times: number[], values: ArrayLike<number>) => `time,value\n${times.map((t, i) => `${new Date(t).toISOString()},${values[i]}`).join('\n')}\n`;

describe('commonGrid: several records on one regular grid (hand-worked cases)', () => {
  it('steps at the coarsest interval back from the earliest common end, and interpolates between neighbouring readings', () => {
    // a: hourly 0..10 h, value = hour; b: every 2 h from 1 h to 9 h, value = 10·hour
    const a = { time: Float64Array.from({ length: 11 }, (_, i) => i), value: Float64Array.from({ length: 11 }, (_, i) => i), interval: 1 };
    const b = { time: Float64Array.from([1, 3, 5, 7, 9]), value: Float64Array.from([10, 30, 50, 70, 90]), interval: 2 };
    const grid = commonGrid([a, b], 100);
    // common stretch [1, 9], step 2, ending at 9
    expect(Array.from(grid.time)).toEqual([1, 3, 5, 7, 9]);
    expect(Array.from(grid.values[0])).toEqual([1, 3, 5, 7, 9]);
    expect(Array.from(grid.values[1])).toEqual([10, 30, 50, 70, 90]);
    expect(grid.dropped).toBe(0);
    // b half an hour later: the grid ends at 9.5 h, and a is interpolated there between 9 h (9) and 10 h (10) → 9.5
    const shifted = commonGrid([a, { ...b, time: b.time.map((t) => t + 0.5) }], 100);
    expect(Array.from(shifted.time)).toEqual([1.5, 3.5, 5.5, 7.5, 9.5]);
    expect(Array.from(shifted.values[0])).toEqual([1.5, 3.5, 5.5, 7.5, 9.5]);
    expect(Array.from(shifted.values[1])).toEqual([10, 30, 50, 70, 90]);
    expect(commonGrid([a, b], 3).time.length).toBe(3);
  });

  it('keeps only the instants after the latest one some member cannot give (a hole wider than two of its intervals)', () => {
    const a = { time: Float64Array.from({ length: 20 }, (_, i) => i), value: new Float64Array(20).fill(1), interval: 1 };
    // b misses 4..8: between 3 and 9 the gap is 6 > 2 intervals, so grid instants 4..8 have no value for b
    const bt = [0, 1, 2, 3, 9, 10, 11, 12, 13, 14, 15, 16, 17, 18, 19];
    const b = { time: Float64Array.from(bt), value: Float64Array.from(bt), interval: 1 };
    const grid = commonGrid([a, b], 100);
    expect(Array.from(grid.time)).toEqual([9, 10, 11, 12, 13, 14, 15, 16, 17, 18, 19]);
    expect(grid.dropped).toBe(9);
    // one missing reading is bridged: drop only 5 → 5 is interpolated between 4 and 6
    const c = { time: Float64Array.from([0, 1, 2, 3, 4, 6, 7]), value: Float64Array.from([0, 1, 2, 3, 4, 6, 7]), interval: 1 };
    const bridged = commonGrid([a, c], 100);
    expect(Array.from(bridged.values[1])).toEqual([0, 1, 2, 3, 4, 5, 6, 7]);
  });
});

describe('site-level snapshots made by the scheduler', () => {
  let siteSlug = '';
  let lead = { id: 0 };
  beforeAll(async () => {
    await migrateUp();
    await db();
    lead = await User.create({ email: 'lead@example.test', name: 'Lea D', role: 'lead', passwordHash: 'not used' });
  });

  it('computes the site indicators after the series are analysed, stores them, and computes again only when a member has new data', async () => {
    const site = await createSite({ slug: 'thermistor-mooring', name: 'Thermistor mooring' }, lead);
    siteSlug = site.slug;
    // two sensors on one mooring sharing a slow common mode (AR(1), Box et al. 2015, Sec. 3.2), hourly and two-hourly
    const n = 600;
    const common = simulateAr1({ n, phi: 0.8, sigma: 1, seed: 31 });
    const own1 = simulateAr1({ n, phi: 0.3, sigma: 0.5, seed: 32 });
    const own2 = simulateAr1({ n, phi: 0.3, sigma: 0.5, seed: 33 });
    const hours = Array.from({ length: n }, (_, i) => T0 + i * HOUR);
    // each detrended its own way: the site analysis follows each series' settings
    const settings = { surrogates: 19, window: 0.25 };
    const upper = await createSeries(
      { slug: 'upper', name: 'Upper sensor', intervalMs: HOUR, siteId: site.id, settings: { ...settings, detrend: 'linear' } },
      null,
    );
    const lower = await createSeries(
      { slug: 'lower', name: 'Lower sensor', intervalMs: 2 * HOUR, siteId: site.id, settings: { ...settings, detrend: 'gaussian', bandwidth: 0.2 } },
      null,
    );
    await createSeries({ slug: 'spot', name: 'Spot samples', intervalMs: null, siteId: site.id }, null);
    const upperValues = Float64Array.from(common, (c, i) => 10 + c + own1[i]);
    const lowerValues = Float64Array.from(common, (c, i) => 4 + 0.5 * c + own2[i]);
    expect((await ingestObservations({ series: upper, source: 'push', csv: csvOf(hours, upperValues) })).status).toBe('succeeded');
    const even = hours.filter((_, i) => i % 2 === 0);
    expect(
      (
        await ingestObservations({
          series: lower,
          source: 'push',
          csv: csvOf(
            even,
            lowerValues.filter((_, i) => i % 2 === 0),
          ),
        })
      ).status,
    ).toBe('succeeded');

    expect((await dueSites()).map((d) => d.siteId)).toEqual([site.id]);
    await runAnalysisCycle();
    const first = await SiteSnapshot.findAll({ where: { siteId: site.id } });
    expect(first).toHaveLength(1);
    expect(first[0].status).toBe('ok');
    expect(await dueSites()).toEqual([]);

    // Expected: the engine's site analysis (checked against numpy in tests/engine/site.test.ts) of the two records
    // put on the two-hourly grid by hand (the upper sensor's own readings at even hours, the lower one as stored),
    // each detrended by hand as its settings say (linear; gaussian with a bandwidth of 0.2 × 300 instants).
    const onGrid = [upperValues.filter((_, i) => i % 2 === 0), lowerValues.filter((_, i) => i % 2 === 0)];
    const residuals = [
      detrend(onGrid[0], 'linear', { bandwidthPoints: 60, movingAverageWidth: 11 }).residual,
      detrend(onGrid[1], 'gaussian', { bandwidthPoints: 60, movingAverageWidth: 11 }).residual,
    ];
    const expected = runSiteAnalysis({ values: residuals }, { ...siteAnalysisSettings(), detrend: 'none' });
    const view = await fetchSiteAnalysis(siteSlug);
    expect(view.state).toBe('ok');
    expect(view.members.used.map((m) => m.slug)).toEqual(['upper', 'lower']);
    expect(view.members.leftOut.map((m) => m.slug)).toEqual(['spot']);
    expect(view.summary!.n).toBe(expected.n);
    expect(view.summary!.interval).toBe(2 * HOUR);
    for (const name of ['pc1-variance', 'pc1-share', 'maf-ac1'] as const) {
      expect(view.summary!.kendall[name].tau).toBeCloseTo(expected.kendall[name].tau!, 12);
      expect(view.summary!.significance[name]!.p).toBe(expected.significance[name]!.p);
      expect(view.summary!.significance[name]!.direction).toBe('rising');
      expect(view.curves!.indicators[name].filter((v) => v !== null).length).toBeGreaterThan(10);
    }
    expect(view.dataTo).toBe(even[even.length - 1]);

    // New data for one member: its series is analysed again, and so is the site, in the same cycle.
    const more = Array.from({ length: 4 }, (_, i) => T0 + (n + i) * HOUR);
    expect((await ingestObservations({ series: upper, source: 'push', csv: csvOf(more, [10, 11, 10, 9]) })).status).toBe('succeeded');
    await runAnalysisCycle();
    expect(await SiteSnapshot.count({ where: { siteId: site.id } })).toBe(2);
    // the upper sensor now runs past the lower one's last reading: the common stretch still ends there
    expect((await fetchSiteAnalysis(siteSlug)).dataTo).toBe(even[even.length - 1]);
    await ingestObservations({ series: lower, source: 'push', csv: csvOf([T0 + n * HOUR, T0 + (n + 2) * HOUR], [4, 4.5]) });
    await runAnalysisCycle();
    expect(await SiteSnapshot.count({ where: { siteId: site.id } })).toBe(3);
    expect((await fetchSiteAnalysis(siteSlug)).dataTo).toBe(T0 + (n + 2) * HOUR);
    // nothing new: nothing computed
    await runAnalysisCycle();
    expect(await SiteSnapshot.count({ where: { siteId: site.id } })).toBe(3);
  });

  it('says why a site cannot be judged, and forgets the snapshot set when a member is retired', async () => {
    const site = await createSite({ slug: 'lonely-buoy', name: 'Lonely buoy' }, lead);
    const only = await createSeries({ slug: 'buoy-temp', name: 'Buoy temperature', intervalMs: HOUR, siteId: site.id }, null);
    await createSeries({ slug: 'buoy-empty', name: 'Buoy oxygen', intervalMs: HOUR, siteId: site.id }, null);
    const x = simulateAr1({ n: 100, phi: 0.5, sigma: 1, seed: 5 });
    await ingestObservations({
      series: only,
      source: 'push',
      csv: csvOf(
        Array.from({ length: 100 }, (_, i) => T0 + i * HOUR),
        x,
      ),
    });
    await runAnalysisCycle();
    const view = await fetchSiteAnalysis(site.slug);
    expect(view.state).toBe('error');
    expect(view.error).toMatch(/at least two series/);
    expect(view.members.leftOut).toEqual([expect.objectContaining({ slug: 'buoy-empty', reason: 'no readings yet' })]);
    // a site down to one active series is not analysed again (nothing to compare)
    await Series.update({ retiredAt: new Date() }, { where: { slug: 'buoy-empty' } });
    expect((await dueSites()).map((d) => d.siteId)).not.toContain(site.id);
  });

  it('migration 0022 goes down and up again', async () => {
    await migrateDown('0019-station-data');
    const sequelize = await db();
    // The table list of either dialect (SQLite's schema table, PostgreSQL's information schema).
    expect(await sequelize.getQueryInterface().showAllTables()).not.toContain('site_snapshots');
    await migrateUp();
    expect(await sequelize.getQueryInterface().showAllTables()).toContain('site_snapshots');
    expect(await SiteSnapshot.count()).toBe(0);
  });
});
