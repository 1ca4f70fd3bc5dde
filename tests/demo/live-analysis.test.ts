import { afterAll, beforeAll, describe, expect, it, vi } from 'vitest';
import { useTempDataDir } from '../support/temp-db';

// The demo as the scheduler analyses it: seeded into a fresh database, then each series with a marked tipping point
// analysed by refreshSeriesAnalysis, the function the analysis job calls.
useTempDataDir('bw-demo-live-');
process.env.BCRYPT_COST = '10';
const { migrateUp } = await import('@/migrations');
const { AnalysisSnapshot, Series, Mark, closeDatabase, db } = await import('@/models');
const { buildDemoScenario } = await import('@/lib/demo/scenario');
const { seedDemoScenario } = await import('@/lib/demo/seed');
const { refreshSeriesAnalysis } = await import('@/lib/analysis/snapshot');

const NOW = new Date('2031-05-17T15:42:07Z');
vi.useFakeTimers({ now: NOW, toFake: ['Date'] });
const DAY = 86_400_000;
const scenario = buildDemoScenario(NOW);
const marked = scenario.filter((s) => s.marks.length > 0);

interface Summary {
  stretch: { from: number; to: number; startsAfter: string };
  shifts: { time: number; index: number }[];
  significance: Record<string, { p: number | null; count: number; nullSd: number | null; nullCount: number }>;
}
const latest = new Map<string, InstanceType<typeof AnalysisSnapshot>>();

beforeAll(async () => {
  await migrateUp();
  await db();
  await seedDemoScenario(null);
  for (const demo of marked) {
    const series = await Series.findOne({ where: { slug: demo.input.slug } });
    latest.set(demo.input.slug, await refreshSeriesAnalysis(series!, { parallel: false }));
  }
}, 300_000);
afterAll(async () => {
  vi.useRealTimers();
  await closeDatabase();
});

describe('the demo analysed live', () => {
  it('has marked tipping points and a maintenance break, stored with their kind', async () => {
    expect(marked.length).toBeGreaterThan(1);
    const kinds = (await Mark.findAll({ attributes: ['kind'], raw: true })).map((t) => t.kind);
    expect(new Set(kinds)).toEqual(new Set(['tipping-point', 'maintenance']));
  });

  it('never spans a mark: the latest analysis of each series starts at or after its last tipping point or maintenance break', () => {
    for (const demo of marked) {
      const snapshot = latest.get(demo.input.slug)!;
      expect(snapshot.status, `${demo.input.slug}: ${snapshot.error}`).toBe('ok');
      const summary = snapshot.summary as unknown as Summary;
      const lastMark = Math.max(...demo.marks.map((t) => t.at));
      expect(summary.stretch.from).toBeGreaterThanOrEqual(lastMark);
      expect(summary.stretch.to).toBe(demo.times[demo.times.length - 1]);
      expect(['tipping-point', 'maintenance', 'shift']).toContain(summary.stretch.startsAfter);
    }
  });

  it('shows the abrupt shift of the collapsed salinity record near the collapse', () => {
    // Where the simulated contrast jumps: the first day after the mark above the midpoint between the level of the
    // 100 days before the mark and that of the last 100 days (read off the record itself, not the model). The
    // jump from one level to the other takes about 50 days in this record, so a change point anywhere on it lies
    // within 60 days of that crossing: the stated tolerance.
    const demo = marked.find((s) => s.input.slug === 'veskary-salinity-contrast')!;
    const mark = demo.marks[0];
    const mean = (from: number, to: number) => demo.values.slice(from, to).reduce((a, b) => a + b, 0) / (to - from);
    const mid = (mean(mark.index - 100, mark.index) + mean(demo.values.length - 100, demo.values.length)) / 2;
    const crossing = demo.times[mark.index + demo.values.slice(mark.index).findIndex((v) => v > mid)];
    const summary = latest.get(demo.input.slug)!.summary as unknown as Summary;
    const near = summary.shifts.filter((shift) => Math.abs(shift.time - crossing) <= 60 * DAY);
    expect(
      near.length,
      `shifts at ${summary.shifts.map((s) => new Date(s.time).toISOString()).join(', ')}; crossing ${new Date(crossing).toISOString()}`,
    ).toBeGreaterThanOrEqual(1);
  });

  it('keeps the spread of the surrogate taus on the summary (sample standard deviation, n − 1: common practice)', async () => {
    const snapshot = await AnalysisSnapshot.findByPk(latest.get(marked[0].input.slug)!.id);
    const summary = snapshot!.summary as unknown as Summary;
    const taus = (snapshot!.curves as { surrogateTaus: Record<string, number[]> }).surrogateTaus;
    for (const [name, sig] of Object.entries(summary.significance)) {
      const finite = taus[name].filter(Number.isFinite);
      const m = finite.reduce((a, b) => a + b, 0) / finite.length;
      const sd = Math.sqrt(finite.reduce((a, b) => a + (b - m) ** 2, 0) / (finite.length - 1));
      expect(sig.nullCount).toBe(finite.length);
      expect(sig.nullSd).toBeCloseTo(sd, 12);
    }
  });

  it('is deterministic: analysing the same record again gives the same summary', async () => {
    const demo = marked[0];
    const series = await Series.findOne({ where: { slug: demo.input.slug } });
    const again = await refreshSeriesAnalysis(series!, { parallel: false });
    expect(again.summary).toEqual(latest.get(demo.input.slug)!.summary);
  }, 120_000);
});
