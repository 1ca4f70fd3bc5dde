import { describe, expect, it } from 'vitest';
import { DEMO_BACKLOG_SAMPLES, DEMO_SERIES_SLUGS, DEMO_SITES, buildDemoScenario, demoRecordEnd, demoMarks } from '@/lib/demo/scenario';
import { LATE_AFTER_INTERVALS, freshnessOf } from '@/lib/overview';
import { seriesCreateSchema } from '@/lib/schemas/series';
import { analysisSettingsSchema } from '@/lib/engine/settings';
import { runAnalysis } from '@/lib/engine/analyze';

const NOW = new Date('2031-05-17T15:42:07Z');
const scenario = buildDemoScenario(NOW);
const bySlug = new Map(scenario.map((s) => [s.input.slug, s]));

describe('demo scenario', () => {
  it('is deterministic: the same end day gives byte-identical records, rules and marks', () => {
    // The same day and the same hour: every record (daily and hourly) ends where it did.
    const again = buildDemoScenario(new Date('2031-05-17T15:00:01Z'));
    expect(again.map((s) => s.input)).toEqual(scenario.map((s) => s.input));
    for (let k = 0; k < scenario.length; k++) {
      expect(Buffer.from(again[k].values.buffer).equals(Buffer.from(scenario[k].values.buffer))).toBe(true);
      expect(Buffer.from(again[k].times.buffer).equals(Buffer.from(scenario[k].times.buffer))).toBe(true);
    }
    expect(demoMarks(NOW)).toEqual(scenario.flatMap((s) => s.marks.map((t) => ({ slug: s.input.slug, ...t }))));
  });

  it('has 8–10 series on 3–4 fictional sites, each a valid series with 1,000–5,000 samples ending a backlog of intervals before now, and fresh', () => {
    expect(scenario.length).toBeGreaterThanOrEqual(8);
    expect(scenario.length).toBeLessThanOrEqual(10);
    expect(new Set(scenario.map((s) => s.input.site))).toEqual(new Set(Object.values(DEMO_SITES)));
    expect(DEMO_SERIES_SLUGS).toEqual(scenario.map((s) => s.input.slug));
    expect(new Set(DEMO_SERIES_SLUGS).size).toBe(DEMO_SERIES_SLUGS.length);
    // Daily records end two days before 00:00 UTC of the current day, hourly ones two hours before the current full hour.
    expect(DEMO_BACKLOG_SAMPLES).toBe(2);
    expect(demoRecordEnd(NOW, 86_400_000)).toBe(Date.UTC(2031, 4, 15));
    expect(demoRecordEnd(NOW, 3_600_000)).toBe(Date.UTC(2031, 4, 17, 13));
    expect(DEMO_BACKLOG_SAMPLES).toBeLessThan(LATE_AFTER_INTERVALS);
    for (const s of scenario) {
      const end = demoRecordEnd(NOW, s.input.intervalMs);
      // Not late at seeding, even at the last moment of the grid step (one ms before the next instant).
      const lastMoment = end + (DEMO_BACKLOG_SAMPLES + 1) * s.input.intervalMs - 1;
      expect(freshnessOf(end, s.input.intervalMs, NOW.getTime())).toBe('fresh');
      expect(freshnessOf(end, s.input.intervalMs, lastMoment)).toBe('fresh');
      expect(() => seriesCreateSchema.parse(s.input)).not.toThrow();
      expect(s.input.settings).toEqual(analysisSettingsSchema.parse(s.input.settings));
      // Benjamini–Hochberg at q = 0.05 over the demo's m series passes nothing unless N ≥ m/q − 1 (its step-up
      // rule applied to the smallest surrogate p, 1/(N + 1); Benjamini & Hochberg 1995, JRSS B 57:289).
      expect(s.input.settings.surrogates).toBeGreaterThanOrEqual(scenario.length / 0.05 - 1);
      // Live settings: a span that stops the window growing with the record, given in time or points.
      expect(s.input.settings.span).toMatch(/^(P\d+[YMWD]|\d+ points)$/);
      expect(s.input.settings.shiftDetection).toBe('on');
      expect(s.input.description).toMatch(/^Synthetic demo data/);
      expect(s.values.length).toBe(s.times.length);
      expect(s.values.length).toBeGreaterThanOrEqual(1000);
      expect(s.values.length).toBeLessThanOrEqual(5000);
      expect(s.times[s.times.length - 1]).toBe(end);
      const steps = new Set(s.times.slice(1).map((t, i) => t - s.times[i]));
      expect([...steps]).toEqual([s.input.intervalMs]);
      expect(s.rules.length).toBeGreaterThanOrEqual(2);
    }
  });

  it('marks each tipping record at its fold instant, inside the record, and the record does pass the unstable branch', () => {
    const marked = scenario.filter((s) => s.marks.some((t) => t.kind === 'tipping-point')).map((s) => s.input.slug);
    expect(marked).toEqual(['veskary-salinity-contrast', 'orlemere-whitefish-stock']);
    for (const slug of marked) {
      const s = bySlug.get(slug)!;
      const [mark] = s.marks;
      expect(mark.at).toBe(s.times[mark.index]);
      expect(mark.index).toBeGreaterThan(0.8 * s.values.length);
      expect(mark.index).toBeLessThan(s.values.length - 100);
      expect(mark.note).not.toMatch(/after the record ends/);
      expect(mark.kind).toBe('tipping-point');
    }
  });

  it('marks the cleaning of the drifting probe as a maintenance break, where its reading jumps back up', () => {
    const s = bySlug.get('orlemere-oxygen-probe')!;
    expect(s.marks.map((t) => t.kind)).toEqual(['maintenance']);
    const [mark] = s.marks;
    expect(mark.at).toBe(s.times[mark.index]);
    // Mean of 30 readings either side: the fouling lost about 0.0008 mg/L a day for 1,800 days (1.44 mg/L).
    const mean = (a: number, b: number) => s.values.slice(a, b).reduce((x, y) => x + y, 0) / (b - a);
    expect(mean(mark.index, mark.index + 30) - mean(mark.index - 30, mark.index)).toBeGreaterThan(1);
  });

  it('keeps gaps in the seasonal record: short ones of at most three days and one long outage early on', () => {
    const s = bySlug.get('orlemere-surface-temperature')!;
    expect(s.input.settings).toMatchObject({ seasonal: 'day-of-year', maxGap: 3, gapPolicy: 'latest-stretch' });
    const lengths: number[] = [];
    for (let i = 0; i < s.values.length; i++) {
      if (!Number.isNaN(s.values[i])) continue;
      const start = i;
      while (Number.isNaN(s.values[i])) i++;
      lengths.push(i - start);
      if (i - start > 3) expect(start).toBeLessThan(s.values.length / 4);
    }
    expect(lengths.filter((l) => l > 3)).toHaveLength(1);
    expect(lengths.filter((l) => l <= 3).length).toBeGreaterThan(10);
    // The calendar phase: warmest in summer, coldest in winter (northern temperate lake).
    const monthMean = (month: number) => {
      let sum = 0,
        count = 0;
      s.values.forEach((v, i) => {
        if (!Number.isNaN(v) && new Date(s.times[i]).getUTCMonth() === month) {
          sum += v;
          count++;
        }
      });
      return sum / count;
    };
    expect(monthMean(7)).toBeGreaterThan(monthMean(1) + 10);
  });

  it('shows what each record is for: rising ac1 against surrogates before the mark on the tipping records and live on the approaching one, none on the controls', async () => {
    // The demo's own promise, checked with the engine at each series' live settings (span, window, detrending,
    // seasonal removal) and 99 AR(1) surrogates: a tipping record as the live analysis saw it the day before its
    // marked tipping point (afterwards it judges only the new state), the others as they stand.
    const verdict = async (slug: string) => {
      const s = bySlug.get(slug)!;
      const end = s.marks.find((t) => t.kind === 'tipping-point')?.index ?? s.values.length;
      const kept = [...s.values.keys()].filter((i) => i < end && !Number.isNaN(s.values[i]));
      const breaks = s.marks.filter((t) => t.index < end).map((t) => ({ time: t.at, kind: t.kind }));
      const result = await runAnalysis(
        { time: Float64Array.from(kept, (i) => s.times[i]), value: Float64Array.from(kept, (i) => s.values[i]), intervalMs: s.input.intervalMs, breaks },
        { ...s.input.settings, surrogates: 99, indicators: ['ac1'] },
        { parallel: false },
      );
      return { tau: result.kendall.ac1!.tau!, p: result.significance.ac1!.p! };
    };
    for (const slug of ['veskary-salinity-contrast', 'orlemere-whitefish-stock', 'brandwhistle-sedge-biomass']) {
      const { tau, p } = await verdict(slug);
      expect(tau).toBeGreaterThan(0.5);
      expect(p).toBeLessThanOrEqual(0.05);
    }
    for (const slug of [
      'veskary-deep-temperature',
      'orlemere-surface-temperature',
      'orlemere-oxygen-probe',
      'brandwhistle-water-table',
      'kestrith-station-pressure',
    ]) {
      expect((await verdict(slug)).p).toBeGreaterThan(0.05);
    }
  }, 120_000);

  it('leaves the approaching record on its stocked branch: its tipping point has not happened yet', () => {
    const s = bySlug.get('brandwhistle-sedge-biomass')!;
    expect(s.marks).toEqual([]);
    // 40 g/m² per model unit; the collapse fold state is x ≈ 4.78 (r = 1, K = 10, h = 1).
    expect(Math.min(...s.values)).toBeGreaterThan(40 * 4.78);
  });
});
