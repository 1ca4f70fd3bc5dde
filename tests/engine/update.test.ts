import { describe, expect, it } from 'vitest';
import { runAnalysis, type AnalysisResult } from '@/lib/engine/analyze';
import { RandomStream } from '@/lib/engine/random';
import { analysisSettingsSchema, type AnalysisSettings } from '@/lib/engine/settings';
import { incrementalBlocker, STATE_FORMAT, updateAnalysis, type AnalysisState } from '@/lib/engine/update';

const DAY = 86_400_000;
const T0 = Date.UTC(2001, 0, 1);

/**
 * A seeded AR(1) record whose coefficient and noise rise along it (slowing down), with a few single missing days
 * inside it (filled by interpolation): the kind of record an update continues.
 */
function record(length: number, seed: number): { time: Float64Array; value: Float64Array } {
  const rng = new RandomStream(seed, 0);
  const time: number[] = [];
  const value: number[] = [];
  let x = 0;
  for (let i = 0; i < length; i++) {
    const phi = 0.2 + (0.7 * i) / length;
    x = phi * x + (1 + i / length) * rng.normal();
    if (i > 10 && i % 97 === 0) continue;
    time.push(T0 + i * DAY);
    value.push(5 + 0.01 * i + x);
  }
  return { time: Float64Array.from(time), value: Float64Array.from(value) };
}

function prefix(r: { time: Float64Array; value: Float64Array }, points: number) {
  return { time: r.time.slice(0, points), value: r.value.slice(0, points), intervalMs: DAY };
}

function expectClose(a: ArrayLike<number | null>, b: ArrayLike<number | null>, tol: number, what: string) {
  expect(a.length, what).toBe(b.length);
  let worst = 0;
  for (let i = 0; i < a.length; i++) {
    const x = a[i];
    const y = b[i];
    if (x === null || y === null || !Number.isFinite(x) || !Number.isFinite(y)) {
      expect(Number.isFinite(x ?? Number.NaN), `${what}[${i}] defined`).toBe(Number.isFinite(y ?? Number.NaN));
      continue;
    }
    worst = Math.max(worst, Math.abs(x - y) / Math.max(1, Math.abs(y)));
  }
  expect(worst, what).toBeLessThanOrEqual(tol);
}

/** Every number of an updated result against a full recomputation: per-point arrays, τ, Kendall p, surrogate p. */
function expectSameAnalysis(updated: AnalysisResult, full: AnalysisResult, settings: AnalysisSettings, taus: 'same' | 'kept') {
  expect(updated.n).toBe(full.n);
  expectClose(updated.series.residual, full.series.residual, 1e-9, 'residual');
  expectClose(updated.series.trend, full.series.trend, 1e-9, 'trend');
  for (const name of settings.indicators) {
    expectClose(updated.indicators[name]!, full.indicators[name]!, 1e-9, name);
    for (const [k, a] of Object.entries(full.companions[name] ?? {})) expectClose(updated.companions[name]![k], a, 1e-9, `${name}.${k}`);
    const [u, f] = [updated.kendall[name]!, full.kendall[name]!];
    expectClose([u.tau, u.p], [f.tau, f.p], 1e-9, `${name} τ and p`);
    if (settings.surrogates > 0 && taus === 'same') expect(updated.significance[name]!.p).toBeCloseTo(full.significance[name]!.p!, 12);
  }
  expect(updated.quality).toEqual(full.quality);
  expect(updated.shifts).toEqual(full.shifts);
  expect(updated.stretch).toEqual(full.stretch);
}

const ALLOWING: [string, Record<string, unknown>][] = [
  ['no detrending', { detrend: 'none', window: '40 points' }],
  ['differences', { detrend: 'difference', window: '50 points', indicators: ['variance', 'ac1', 'cv', 'spectral-ratio'], maxEvaluatedWindows: 100000 }],
  ['moving average', { detrend: 'moving-average', movingAverageWidth: 15, window: '60 points' }],
  ['Gaussian smoother, h in points', { detrend: 'gaussian', bandwidth: '12 points', window: '60 points' }],
  [
    'local-linear smoother, h as a duration',
    {
      detrend: 'local-linear',
      bandwidth: 'P9D',
      window: 'P45D',
      indicators: ['variance', 'ac1', 'sd', 'recovery', 'restoring-rate'],
      maxEvaluatedWindows: 100000,
    },
  ],
];

describe('incremental analysis agrees with a full recomputation (1e-9)', () => {
  for (const [label, raw] of ALLOWING) {
    it(`${label}: one new point, then several, on random records`, async () => {
      const settings = analysisSettingsSchema.parse(raw);
      expect(incrementalBlocker(settings)).toBeNull();
      for (const seed of [3, 17]) {
        const r = record(420, seed);
        const first = await updateAnalysis(prefix(r, 360), settings, null, { parallel: false });
        expect(first.how.mode).toBe('full');
        let state = first.state as AnalysisState;
        expect(state).not.toBeNull();
        for (const upTo of [361, 362, 367, 380]) {
          const update = await updateAnalysis(prefix(r, upTo), settings, state, { parallel: false });
          expect(update.how, `${label}, seed ${seed}, ${upTo} points`).toMatchObject({ mode: 'incremental' });
          expectSameAnalysis(update.result, await runAnalysis(prefix(r, upTo), settings, { parallel: false }), settings, 'same');
          state = update.state!;
        }
      }
    });
  }

  it('indicator values with many ties (readings on a coarse scale): τ, its tie-corrected p and the skipped windows agree', async () => {
    const settings = analysisSettingsSchema.parse({ detrend: 'none', window: '10 points', indicators: ['variance', 'ac1', 'sd'], shiftDetection: 'off' });
    const rng = new RandomStream(31, 0);
    const time = Float64Array.from({ length: 400 }, (_, i) => T0 + i * DAY);
    const value = Float64Array.from({ length: 400 }, (_, i) => (i >= 200 && i < 215 ? 1 : Math.round(rng.uniform() * 3)));
    const first = await updateAnalysis({ time: time.slice(0, 380), value: value.slice(0, 380), intervalMs: DAY }, settings, null, { parallel: false });
    let state = first.state!;
    for (const upTo of [381, 385, 400]) {
      const input = { time: time.slice(0, upTo), value: value.slice(0, upTo), intervalMs: DAY };
      const update = await updateAnalysis(input, settings, state, { parallel: false });
      expect(update.how.mode).toBe('incremental');
      const full = await runAnalysis(input, settings, { parallel: false });
      expect(full.quality.windowsBelowCoverage + full.indicators.variance!.filter((v) => v === null).length).toBeGreaterThan(9);
      expectSameAnalysis(update.result, full, settings, 'same');
      state = update.state!;
    }
  });

  it('an indicator whose S was not counted (its τ was taken from its base) is counted afresh, to the same τ', async () => {
    const settings = analysisSettingsSchema.parse({ detrend: 'gaussian', bandwidth: '12 points', window: '60 points', indicators: ['variance', 'sd', 'ac1'] });
    const r = record(420, 23);
    const first = await updateAnalysis(prefix(r, 400), settings, null, { parallel: false });
    const update = await updateAnalysis(prefix(r, 401), settings, first.state, { parallel: false });
    expect(update.state!.kendallS.sd).toBeNull();
    expect(update.state!.kendallS.variance).toEqual(expect.any(Number));
    // As when reuse stops (recovery once ac1 ≤ 0 somewhere): ac1 has no S kept and must be counted afresh.
    const withoutS = { ...update.state!, kendallS: { ...update.state!.kendallS, ac1: null } };
    const next = await updateAnalysis(prefix(r, 403), settings, withoutS, { parallel: false });
    expect(next.how.mode).toBe('incremental');
    expectSameAnalysis(next.result, await runAnalysis(prefix(r, 403), settings, { parallel: false }), settings, 'same');
    expect(next.state!.kendallS.ac1).toBe((await updateAnalysis(prefix(r, 403), settings, update.state, { parallel: false })).state!.kendallS.ac1);
  });

  it('a state of an earlier layout is not continued: a full recomputation, saying so, leaves one of this layout', async () => {
    const settings = analysisSettingsSchema.parse({ detrend: 'none', window: '40 points' });
    const r = record(300, 8);
    const first = await updateAnalysis(prefix(r, 280), settings, null, { parallel: false });
    const earlier = { ...first.state!, format: 1 } as unknown as AnalysisState;
    const update = await updateAnalysis(prefix(r, 281), settings, earlier, { parallel: false });
    expect(update.how).toMatchObject({ mode: 'full', reason: expect.stringMatching(/earlier layout/) });
    expect(update.state!.format).toBe(STATE_FORMAT);
  });

  it('a new point after a missing day: the interpolated point and the new one are appended', async () => {
    const settings = analysisSettingsSchema.parse({ detrend: 'gaussian', bandwidth: '10 points', window: '40 points' });
    const r = record(300, 5);
    const first = await updateAnalysis(prefix(r, 250), settings, null, { parallel: false });
    const late = {
      time: Float64Array.from([...r.time.slice(0, 250), r.time[249] + 2 * DAY]),
      value: Float64Array.from([...r.value.slice(0, 250), 6]),
      intervalMs: DAY,
    };
    const update = await updateAnalysis(late, settings, first.state, { parallel: false });
    expect(update.how.mode).toBe('incremental');
    expect(update.result.n).toBe(first.result.n + 2);
    expectSameAnalysis(update.result, await runAnalysis(late, settings, { parallel: false }), settings, 'same');
  });

  it('the Gaussian smoother beyond its reach: residuals further back than ⌈8.86 h⌉ agree with the longer record to 1e-12 (measured)', async () => {
    const settings = analysisSettingsSchema.parse({ detrend: 'gaussian', bandwidth: '25 points', window: '60 points' });
    const r = record(1200, 9);
    const before = await runAnalysis(prefix(r, 1000), settings, { parallel: false });
    const after = await runAnalysis(prefix(r, 1001), settings, { parallel: false });
    const reach = Math.ceil(8.86 * 25);
    let worst = 0;
    for (let i = 0; i < before.n - reach; i++) worst = Math.max(worst, Math.abs(before.series.residual[i] - after.series.residual[i]));
    expect(worst).toBeLessThan(1e-12);
    // …and inside the reach the new point does move them (so the tail must be recomputed).
    expect(Math.abs(before.series.residual[before.n - 1] - after.series.residual[before.n - 1])).toBeGreaterThan(1e-6);
  });
});

describe('surrogates of an updated record', () => {
  const settings = analysisSettingsSchema.parse({ detrend: 'none', window: '40 points', surrogates: 19, indicators: ['variance', 'ac1'] });

  it('keeps the taus drawn on the earlier record, says so, and reads the current τ against them', async () => {
    const r = record(400, 11);
    const first = await updateAnalysis(prefix(r, 350), settings, null, { parallel: false });
    const update = await updateAnalysis(prefix(r, 351), settings, first.state, { parallel: false, refresh: { points: 100, tauShift: 10 } });
    expect(update.how.mode).toBe('incremental');
    expect(update.how.reason).toMatch(/surrogate taus kept from the record of \d+ points \(1 points before this one\)/);
    const full = await runAnalysis(prefix(r, 351), settings, { parallel: false });
    expectSameAnalysis(update.result, full, settings, 'kept');
    for (const name of settings.indicators) {
      const sig = update.result.significance[name]!;
      expect(sig.drawn).toEqual({ n: first.result.n, to: first.result.stretch.to });
      expect(sig.taus).toEqual(first.result.significance[name]!.taus);
      // p = (1 + #{oriented τ_s ≥ oriented τ})/(N + 1) with the current τ (Davison & Hinkley 1997, Sec. 4.2.1).
      const tau = full.kendall[name]!.tau!;
      const beyond = sig.taus.filter((t) => t >= tau).length;
      expect(sig.p).toBeCloseTo((1 + beyond) / (sig.taus.length + 1), 12);
    }
  });

  it('redraws them in full after the given number of points, or when τ moves beyond the given share of their spread', async () => {
    const r = record(400, 11);
    const first = await updateAnalysis(prefix(r, 350), settings, null, { parallel: false });
    const late = await updateAnalysis(prefix(r, 355), settings, first.state, { parallel: false, refresh: { points: 5, tauShift: 10 } });
    expect(late.how).toMatchObject({ mode: 'full', reason: expect.stringMatching(/5 points were added/) });
    expectSameAnalysis(late.result, await runAnalysis(prefix(r, 355), settings, { parallel: false }), settings, 'same');
    expect(late.result.significance.ac1!.drawn.n).toBe(late.result.n);
    const moved = await updateAnalysis(prefix(r, 351), settings, first.state, { parallel: false, refresh: { points: 100, tauShift: 0 } });
    expect(moved.how).toMatchObject({ mode: 'full', reason: expect.stringMatching(/moved by more than 0/) });
  });
});

describe('what forces a full recomputation', () => {
  const base = { detrend: 'moving-average', window: '40 points' };
  const settings = analysisSettingsSchema.parse(base);
  const r = record(320, 23);

  it('settings that make every residual, the window or the stretch change with a new point keep no state', async () => {
    for (const [raw, words] of [
      [{ ...base, detrend: 'linear' }, /linear detrending/],
      [{ ...base, detrend: 'gaussian', bandwidth: 0.1 }, /bandwidth is a fraction/],
      [{ ...base, window: 0.5 }, /window is a fraction/],
      [{ ...base, span: '200 points' }, /span/],
      [{ ...base, sensitivity: true }, /sensitivity/],
    ] as const) {
      const s = analysisSettingsSchema.parse(raw);
      const out = await updateAnalysis(prefix(r, 300), s, null, { parallel: false });
      expect(out.how).toMatchObject({ mode: 'full', reason: expect.stringMatching(words) });
      expect(out.state).toBeNull();
    }
  });

  it('replaced data, changed settings, a new engine, a mark, no new point, or updates switched off', async () => {
    const first = await updateAnalysis(prefix(r, 300), settings, null, { parallel: false });
    const state = first.state!;
    const replaced = prefix(r, 301);
    replaced.value[100] += 1;
    const cases: [Parameters<typeof updateAnalysis>, RegExp][] = [
      [[replaced, settings, state], /values already analysed changed/],
      [[prefix(r, 301), analysisSettingsSchema.parse({ ...base, seed: 2 }), state], /settings changed/],
      [[prefix(r, 301), settings, { ...state, engineVersion: '0.0.1' }], /engine changed/],
      [[{ ...prefix(r, 301), breaks: [{ time: r.time[150], kind: 'maintenance' }] }, settings, state], /starts elsewhere/],
      [[prefix(r, 300), settings, state], /no point was added/],
      [[prefix(r, 301), settings, state, { incremental: false }], /switched off/],
    ];
    for (const [args, words] of cases) {
      const out = await updateAnalysis(args[0], args[1], args[2], { parallel: false, ...args[3] });
      expect(out.how).toMatchObject({ mode: 'full', reason: expect.stringMatching(words) });
      expectSameAnalysis(out.result, await runAnalysis(args[0], args[1], { parallel: false }), args[1], 'same');
    }
  });

  it('per-window indicators evaluated at evenly spaced windows fall back to a full recomputation', async () => {
    const s = analysisSettingsSchema.parse({ ...base, indicators: ['ac1', 'spectral-ratio'], maxEvaluatedWindows: 10 });
    const first = await updateAnalysis(prefix(r, 300), s, null, { parallel: false });
    expect(first.state).toBeNull();
    const withState = await updateAnalysis(
      prefix(r, 300),
      analysisSettingsSchema.parse({ ...base, indicators: ['ac1', 'spectral-ratio'], maxEvaluatedWindows: 100000 }),
      null,
      { parallel: false },
    );
    const out = await updateAnalysis(prefix(r, 301), s, { ...withState.state!, settingsKey: JSON.stringify(s) }, { parallel: false });
    expect(out.how).toMatchObject({ mode: 'full', reason: expect.stringMatching(/evenly spaced windows/) });
  });
});
