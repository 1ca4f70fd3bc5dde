import { describe, expect, it } from 'vitest';
import { DEMO_SERIES_SLUGS, DEMO_SITES, buildDemoScenario, demoRecordEnd, demoTransitions } from '@/lib/demo/scenario';
import { seriesCreateSchema } from '@/lib/schemas/series';
import { analysisSettingsSchema } from '@/lib/engine/settings';
import { detrend } from '@/lib/engine/detrend';
import { rollingIndicators, windowPoints } from '@/lib/engine/rolling';
import { indicatorTrend } from '@/lib/engine/kendall';
import { prepareSurrogateJob, surrogatePValue, surrogateTaus } from '@/lib/engine/surrogates';

const NOW = new Date('2031-05-17T15:42:07Z');
const DAY = 86_400_000;
const scenario = buildDemoScenario(NOW);
const bySlug = new Map(scenario.map((s) => [s.input.slug, s]));

describe('demo scenario', () => {
  it('is deterministic: the same end day gives byte-identical records, rules and marks', () => {
    const again = buildDemoScenario(new Date('2031-05-17T00:00:01Z'));
    expect(again.map((s) => s.input)).toEqual(scenario.map((s) => s.input));
    for (let k = 0; k < scenario.length; k++) {
      expect(Buffer.from(again[k].values.buffer).equals(Buffer.from(scenario[k].values.buffer))).toBe(true);
      expect(Buffer.from(again[k].times.buffer).equals(Buffer.from(scenario[k].times.buffer))).toBe(true);
    }
    expect(demoTransitions(NOW)).toEqual(scenario.flatMap((s) => s.transitions.map((t) => ({ slug: s.input.slug, ...t }))));
  });

  it('has 8–10 series on 3–4 fictional sites, each a valid series with 1,000–5,000 samples ending today at 00:00 UTC', () => {
    expect(scenario.length).toBeGreaterThanOrEqual(8);
    expect(scenario.length).toBeLessThanOrEqual(10);
    expect(new Set(scenario.map((s) => s.input.site))).toEqual(new Set(Object.values(DEMO_SITES)));
    expect(DEMO_SERIES_SLUGS).toEqual(scenario.map((s) => s.input.slug));
    expect(new Set(DEMO_SERIES_SLUGS).size).toBe(DEMO_SERIES_SLUGS.length);
    const end = demoRecordEnd(NOW);
    expect(end).toBe(Date.UTC(2031, 4, 17));
    for (const s of scenario) {
      expect(() => seriesCreateSchema.parse(s.input)).not.toThrow();
      expect(s.input.settings).toEqual(analysisSettingsSchema.parse(s.input.settings));
      expect(s.input.settings.surrogates).toBeGreaterThanOrEqual(99);
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
    const marked = scenario.filter((s) => s.transitions.length > 0).map((s) => s.input.slug);
    expect(marked).toEqual(['veskary-salinity-contrast', 'orlemere-whitefish-stock']);
    for (const slug of marked) {
      const s = bySlug.get(slug)!;
      const [mark] = s.transitions;
      expect(mark.at).toBe(s.times[mark.index]);
      expect(mark.index).toBeGreaterThan(0.8 * s.values.length);
      expect(mark.index).toBeLessThan(s.values.length - 100);
      expect(mark.note).not.toMatch(/after the record ends/);
    }
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
      let sum = 0, count = 0;
      s.values.forEach((v, i) => {
        if (!Number.isNaN(v) && new Date(s.times[i]).getUTCMonth() === month) { sum += v; count++; }
      });
      return sum / count;
    };
    expect(monthMean(7)).toBeGreaterThan(monthMean(1) + 10);
  });

  it('shows what each record is for: rising ac1 against surrogates on the tipping and approaching records, none on the controls', () => {
    // The demo's own promise, checked with the engine's detrending, rolling ac1, Kendall tau and AR(1) surrogates
    // at each series' settings (the seasonal record needs the engine's preparation and is left out here).
    const verdict = (slug: string) => {
      const s = bySlug.get(slug)!;
      const { settings } = s.input;
      const n = s.values.length;
      const { residual } = detrend(s.values, settings.detrend, { bandwidthPoints: settings.bandwidth * n, movingAverageWidth: settings.movingAverageWidth });
      const w = windowPoints(settings.window, n);
      const dt = s.input.intervalMs / DAY;
      const tau = indicatorTrend(rollingIndicators(residual, w, ['ac1'], { dt }).ac1).tau;
      const job = prepareSurrogateJob(residual, s.values, { method: 'ar1', seed: settings.seed, w, dt, indicators: ['ac1'] });
      return { tau, p: surrogatePValue(tau, surrogateTaus(job, 0, 99).ac1).p! };
    };
    for (const slug of ['veskary-salinity-contrast', 'orlemere-whitefish-stock', 'brandwhistle-sedge-biomass']) {
      const { tau, p } = verdict(slug);
      expect(tau).toBeGreaterThan(0.5);
      expect(p).toBeLessThanOrEqual(0.05);
    }
    for (const slug of ['veskary-deep-temperature', 'orlemere-oxygen-probe', 'brandwhistle-water-table', 'kestrith-station-pressure']) {
      expect(verdict(slug).p).toBeGreaterThan(0.05);
    }
  });

  it('leaves the approaching record on its stocked branch: its transition has not happened yet', () => {
    const s = bySlug.get('brandwhistle-sedge-biomass')!;
    expect(s.transitions).toEqual([]);
    // 40 g/m² per model unit; the collapse fold state is x ≈ 4.78 (r = 1, K = 10, h = 1).
    expect(Math.min(...s.values)).toBeGreaterThan(40 * 4.78);
  });
});
