import { describe, expect, it } from 'vitest';
import { DAY, days, rule } from './helpers';
import garwood from '../../fixtures/reference/garwood_scipy.json';
import { garwoodInterval } from '@/lib/backtest/poisson';
import { alarmOnsets, type Evidence } from '@/lib/backtest/replay';
import { runBacktest } from '@/lib/backtest/run';
import { simulateAr1 } from '@/lib/demo/models';
import { analysisSettingsSchema } from '@/lib/engine/settings';

const YEAR = 365.25 * DAY;

/** Evidence with a constant tau at every instant, one a day. */
function flatEvidence(steps: number, tau: number): Evidence {
  return {
    index: Int32Array.from({ length: steps }, (_, s) => s),
    time: Float64Array.from({ length: steps }, (_, s) => s * DAY),
    tau: new Float64Array(steps).fill(tau),
    p: new Float64Array(steps).fill(0.01),
    level: new Float64Array(steps).fill(0),
    count: new Int32Array(steps).fill(100),
  };
}

describe('alarm onsets judge the surrogate p wherever it is needed', () => {
  it('an alarm after 300 failing surrogate checks is still raised (no cap that stops judging)', () => {
    // tau passes everywhere; the surrogate p fails at steps 0..299 and passes from 300 on. With persistence 3
    // the onset is at step 302, after 303 checks; a cap of 100 checks would have suppressed it.
    const report = alarmOnsets(flatEvidence(400, 0.6), rule({ maxSurrogateP: 0.05 }), 0.3, (s) =>
      s < 300 ? { p: 0.5, passed: false } : { p: 0.01, passed: true },
    );
    expect(report.onsets.map((o) => o.step)).toEqual([302]);
    expect(report.surrogateChecks).toBe(303);
    expect(report.notJudged.length).toBe(0);
  });

  it('instants the cost bound leaves unchecked are reported as not judged and break the run', () => {
    // tau fails at step 50 (closing the alarm opened at step 2); checks are refused at steps 51..149 and pass
    // elsewhere, so the next run starts at 150 and opens an alarm at 152 (persistence 3).
    const ev = flatEvidence(300, 0.6);
    ev.tau[50] = 0;
    const report = alarmOnsets(ev, rule({ maxSurrogateP: 0.05 }), 0.3, (s) => (s > 50 && s < 150 ? 'over-budget' : { p: 0.01, passed: true }));
    expect(Array.from(report.notJudged)).toEqual(Array.from({ length: 99 }, (_, i) => 51 + i));
    expect(report.onsets.map((o) => o.step)).toEqual([2, 152]);
  });

  it('reads tau in the rule direction: a falling rule passes on tau ≤ −threshold, never on a rising tau', () => {
    expect(alarmOnsets(flatEvidence(20, -0.6), rule({ indicator: 'recovery' }), 0.3).onsets).toHaveLength(1);
    expect(alarmOnsets(flatEvidence(20, 0.6), rule({ indicator: 'recovery' }), 0.3).onsets).toHaveLength(0);
    expect(alarmOnsets(flatEvidence(20, 0.6), rule({ indicator: 'recovery', direction: 'rising' }), 0.3).onsets).toHaveLength(1);
    expect(alarmOnsets(flatEvidence(20, -0.6), rule({ indicator: 'skewness' }), 0.3).onsets).toHaveLength(1);
  });

  it('ignores the Kendall p (no longer a gate)', () => {
    const ev = flatEvidence(20, 0.6);
    ev.p.fill(0.9);
    expect(alarmOnsets(ev, rule({ maxKendallP: 0.05 }), 0.3).onsets).toHaveLength(1);
  });
});

describe('judged time, hand-computed on a small record', () => {
  // 100 daily points, no detrending, window 0.2 → w = 20 points; warm-up max(10, ⌈20/4⌉) = 10 indicator values.
  // The first indicator value is at index 19, the tenth at 28. Mark at index 80: the stretch after it (20 points)
  // is too short for a window and its warm-up, so judged instants are indices 28..79 (52 days).
  // Horizon = one window = 20 days → warning stretch [60, 80). Instants that can host a false alarm: 28..59 = 32 days.
  const n = 100;
  const t = days(n);
  const x = simulateAr1({ n, phi: 0.5, sigma: 1, seed: 21 });
  const settings = analysisSettingsSchema.parse({ detrend: 'none', window: 0.2, surrogates: 19 });
  it('divides false alarms by the 32 days that could host one, not the 100-day record', async () => {
    const r = await runBacktest({
      time: t,
      value: x,
      intervalMs: DAY,
      settings,
      rule: rule({ minTau: -1, persistence: 1 }),
      tippingPoints: [{ at: t[80] }],
      every: 1,
    });
    expect(r.steps).toBe(52);
    expect(r.horizonMs).toBe(20 * DAY);
    expect(r.judged.years * YEAR).toBeCloseTo(52 * DAY, 3);
    expect(r.falseAlarms.exposureYears * YEAR).toBeCloseTo(32 * DAY, 3);
    // threshold −1: the rule passes at the first judged instant and stays open, so exactly one alarm, at index 28
    expect(r.alarms.map((a) => [a.kind, (a.time - t[0]) / DAY])).toEqual([['false', 28]]);
    expect(r.falseAlarms.perYear).toBeCloseTo(1 / (32 / 365.25), 9);
  });
  it('instants left unjudged by the cost bound leave the judged time', async () => {
    // with a surrogate criterion and no budget every instant that passes on tau (all of them) is not judged
    const r = await runBacktest(
      {
        time: t,
        value: x,
        intervalMs: DAY,
        settings,
        rule: rule({ minTau: -1, persistence: 1, maxSurrogateP: 0.05 }),
        tippingPoints: [{ at: t[80] }],
        every: 1,
      },
      { surrogateBudget: 0 },
    );
    expect(r.judged.notJudgedSteps).toBe(52);
    expect(r.judged.notJudged).toEqual([{ from: t[28], to: t[79], steps: 52 }]);
    expect(r.judged.years).toBe(0);
    expect(r.falseAlarms.exposureYears).toBe(0);
    expect(r.alarms).toHaveLength(0);
  });
});

describe('after a marked tipping point the replay judges only the record since it, as the live analysis does', () => {
  it('restarts window, warm-up and trend at the mark; judged time hand-computed', async () => {
    // 200 daily points, no detrending, window 0.1 → w = 20, warm-up 10 values; mark at index 100.
    // Stretch 0..99: judged 28..99 (72 instants); stretch 100..199: judged 128..199 (72). Horizon 20 days:
    // warning [80, 100); settling [100, 120). Could host a false alarm: 28..79 (52) + 128..199 (72) = 124 days.
    const n = 200;
    const t = days(n);
    const x = simulateAr1({ n, phi: 0.5, sigma: 1, seed: 23 });
    const settings = analysisSettingsSchema.parse({ detrend: 'none', window: 0.1, surrogates: 0 });
    const r = await runBacktest({
      time: t,
      value: x,
      intervalMs: DAY,
      settings,
      rule: rule({ minTau: -1, persistence: 1 }),
      tippingPoints: [{ at: t[100] }],
      every: 1,
    });
    expect(r.steps).toBe(144);
    expect(r.evidence.time[72]).toBe(t[128]);
    expect(r.judged.years * YEAR).toBeCloseTo(144 * DAY, 3);
    expect(r.falseAlarms.exposureYears * YEAR).toBeCloseTo(124 * DAY, 3);
    // threshold −1: one alarm opens at the first instant of each stretch
    expect(r.alarms.map((a) => [a.kind, (a.time - t[0]) / DAY])).toEqual([
      ['false', 28],
      ['false', 128],
    ]);
  });
});

describe('the replayed stretch restarts where the live analysis restarts', () => {
  // 1,200 daily AR(1) points (φ = 0.3, σ = 1; Box et al. 2015, Sec. 3.2), no detrending, window 0.1 → w = 120,
  // warm-up max(10, ⌈120/4⌉) = 30 values: the first value of a stretch starting at a is at a + 119, the 30th
  // (first judged instant) at a + 148.
  const n = 1200;
  const t = days(n);
  const noise = simulateAr1({ n, phi: 0.3, sigma: 1, seed: 41 });
  const r0 = rule({ minTau: -1, persistence: 1 });
  it('after an abrupt shift of level found by the engine detector (not a tipping point: nothing is scored)', async () => {
    // a step of 4 noise sd at index 600, well beyond the detector's calibrated penalty (lib/engine/shifts.ts)
    const x = Float64Array.from(noise, (v, i) => v + (i >= 600 ? 4 : 0));
    const settings = analysisSettingsSchema.parse({ detrend: 'none', window: 0.1, surrogates: 0 });
    const r = await runBacktest({ time: t, value: x, intervalMs: DAY, settings, rule: r0, tippingPoints: [], every: 1 });
    expect(r.restarts).toHaveLength(1);
    const { index, reason, knownFromIndex } = r.restarts[0];
    expect(reason).toBe('shift');
    expect(Math.abs(index - 600)).toBeLessThanOrEqual(2);
    // a live cycle knows of the shift once its record shows it: the scan's end zone needs at least max(5, G/8)
    // points of the new level (lib/engine/shifts.ts), and for a 4-sd step it sees it within a few dozen
    expect(knownFromIndex).toBeGreaterThanOrEqual(index + 4);
    expect(knownFromIndex).toBeLessThan(index + 60);
    // judged instants: 148..knownFrom−1 on the first stretch (across the step, as the live analysis until it
    // sees the shift) and index+148..1199 on the second; one alarm opens at the first instant of each stretch
    expect(r.steps).toBe(knownFromIndex - 148 + (n - index - 148));
    expect(r.alarms.map((a) => (a.time - t[0]) / DAY)).toEqual([148, index + 148]);
    expect(r.tippingPoints).toHaveLength(0);
    // with shift detection off the replay runs straight across the step, as the live analysis then would
    const off = await runBacktest({
      time: t,
      value: x,
      intervalMs: DAY,
      settings: { ...settings, shiftDetection: 'off' },
      rule: r0,
      tippingPoints: [],
      every: 1,
    });
    expect(off.restarts).toHaveLength(0);
    expect(off.steps).toBe(n - 148);
  });
  it('after a maintenance break, which is never scored as a tipping point', async () => {
    const settings = analysisSettingsSchema.parse({ detrend: 'none', window: 0.1, surrogates: 0, shiftDetection: 'off' });
    const r = await runBacktest({ time: t, value: noise, intervalMs: DAY, settings, rule: r0, tippingPoints: [], breaks: [{ at: t[600] }], every: 1 });
    expect(r.restarts).toEqual([{ time: t[600], index: 600, reason: 'maintenance', knownAt: t[600], knownFromIndex: 600 }]);
    expect(r.steps).toBe(452 + 452);
    expect(r.tippingPoints).toHaveLength(0);
    // both alarms are false (no warning stretch, no settling stretch), counted over all judged time
    expect(r.alarms.map((a) => [a.kind, (a.time - t[0]) / DAY])).toEqual([
      ['false', 148],
      ['false', 748],
    ]);
    expect(r.falseAlarms.exposureYears * YEAR).toBeCloseTo(904 * DAY, 3);
  });
});

describe('windows inside a flat run (a stuck sensor) are not judged', () => {
  it('as in the engine (unjudgedWindows): the 81 windows of 120 points that fit in a 200-point run', async () => {
    // 1,200 daily AR(1) points with a run of 200 identical values from index 500 (a stuck sensor, the QARTOD
    // flat-line case); window 0.1 → w = 120: windows ending at 619..699 lie wholly inside the run
    const n = 1200;
    const t = days(n);
    const x = simulateAr1({ n, phi: 0.3, sigma: 1, seed: 43 });
    x.fill(0, 500, 700);
    const settings = analysisSettingsSchema.parse({ detrend: 'none', window: 0.1, surrogates: 0, shiftDetection: 'off' });
    const r = await runBacktest({ time: t, value: x, intervalMs: DAY, settings, rule: rule({ minTau: -1, persistence: 1 }), tippingPoints: [], every: 1 });
    expect(r.judged.inFlatRun).toBe(81);
    expect(r.judged.belowCoverage).toBe(0);
    expect(r.judged.notJudged).toEqual([{ from: t[619], to: t[699], steps: 81 }]);
  });
});

describe('windows below the coverage floor are not judged', () => {
  it('a stretch with a third of its days missing (filled by interpolation) leaves its instants unjudged', async () => {
    // 600 daily AR(1) values; from index 300 to 419 every third day is missing (runs of 1, within maxGap 3),
    // so windows of w = 60 points (window 0.1) lying mostly in that stretch hold about 2/3 < 80 % observed points
    const n = 600;
    const all = days(n);
    const x = simulateAr1({ n, phi: 0.5, sigma: 1, seed: 9 });
    const keep = Array.from({ length: n }, (_, i) => i).filter((i) => !(i >= 300 && i < 420 && i % 3 === 0));
    const settings = analysisSettingsSchema.parse({ detrend: 'none', window: 0.1, surrogates: 0 });
    const r = await runBacktest({
      time: Float64Array.from(keep, (i) => all[i]),
      value: Float64Array.from(keep, (i) => x[i]),
      intervalMs: DAY,
      settings,
      rule: rule({ minTau: -1, persistence: 1 }),
      tippingPoints: [],
      every: 1,
    });
    expect(r.geometry.windowPoints).toBe(60);
    // a window needs 0.8 · 60 = 48 observed points, so it is below the floor once it holds 13 or more missing
    // days, i.e. about 39 days of the stretch: from index ≈ 338 until it has mostly left the stretch (< 480);
    // one contiguous stretch of unjudged instants
    expect(r.judged.belowCoverage).toBeGreaterThan(50);
    expect(r.judged.belowCoverage).toBe(r.judged.notJudgedSteps);
    expect(r.judged.notJudged).toHaveLength(1);
    const { from, to } = r.judged.notJudged[0];
    expect(from).toBeGreaterThan(all[300]);
    expect(to).toBeLessThan(all[420 + 60]);
    // judged time leaves them out: 600 − first judged index − unjudged instants, one day each
    expect(r.judged.years * YEAR).toBeCloseTo((r.steps - r.judged.notJudgedSteps) * DAY, 3);
  });
});

describe('a stationary record with a mark at its end', () => {
  // Stationary AR(1) (Box et al. 2015, Sec. 3.2): no warning is possible, so an alarm far before the mark is
  // false. 1,500 daily points, linear detrending, window 0.25 → 375 points = the default horizon; warm-up 94
  // values → first judged index 469 (every 5: indices 469, 474, …). Instants before mark − 375 d (index 1124):
  // 469..1119, 131 instants × 5 days = 655 days.
  const N = 1500;
  const t = days(N);
  const x = simulateAr1({ n: N, phi: 0.5, sigma: 1, seed: 2 });
  const settings = analysisSettingsSchema.parse({ detrend: 'linear', window: 0.25, surrogates: 0 });
  const r0 = rule({ persistence: 2 });
  it('scores no multi-year lead time; the early alarm is a false alarm over 655 judged days', async () => {
    const r = await runBacktest({ time: t, value: x, intervalMs: DAY, settings, rule: r0, tippingPoints: [{ at: t[N - 1] }], every: 5 });
    expect(r.horizonMs).toBe(375 * DAY);
    const lead = r.tippingPoints[0].leadTimeMs;
    expect(lead === null || lead <= r.horizonMs).toBe(true);
    expect(r.falseAlarms.exposureYears * YEAR).toBeCloseTo(655 * DAY, 3);
    expect(r.falseAlarms.count).toBeGreaterThanOrEqual(1);
    expect(r.falseAlarms.count).toBe(r.alarms.filter((a) => a.kind === 'false').length);
  });
  it('without a finite horizon the same alarm would have claimed a lead time of years', async () => {
    const r = await runBacktest({ time: t, value: x, intervalMs: DAY, settings, rule: r0, tippingPoints: [{ at: t[N - 1] }], every: 5, horizonMs: 1e15 });
    expect(r.tippingPoints[0].leadTimeMs!).toBeGreaterThan(2 * r.geometry.windowPoints * DAY);
    expect(r.falseAlarms.count).toBe(0);
  });
});

describe('exact Poisson interval of a false-alarm rate', () => {
  it.each(garwood.cases)('k = $k over $exposure years agrees with scipy.stats.chi2.ppf to 1e-9 (fixtures/reference/garwood_scipy.json)', (c) => {
    const [lo, hi] = garwoodInterval(c.k, c.exposure)!;
    expect(Math.abs(lo - c.lower)).toBeLessThanOrEqual(1e-9 * Math.max(1, c.lower));
    expect(Math.abs(hi - c.upper)).toBeLessThanOrEqual(1e-9 * Math.max(1, c.upper));
  });
});
