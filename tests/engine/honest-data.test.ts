import { describe, expect, it } from 'vitest';
import { runAnalysis } from '@/lib/engine/analyze';
import { unjudgedWindows } from '@/lib/engine/coverage';
import { detectSamplingChanges, fillLinear, prepareSeries } from '@/lib/engine/prepare';
import { RandomStream } from '@/lib/engine/random';
import { analysisSettingsSchema } from '@/lib/engine/settings';
import { makeSurrogate, prepareSurrogateJob } from '@/lib/engine/surrogates';

const HOUR = 3_600_000;
const base = { maxGap: 3, gapPolicy: 'error' as const, span: null, logTransform: false, seasonal: 'none' as const };

function noise(n: number, seed: number): Float64Array {
  const rng = new RandomStream(seed, 0);
  return Float64Array.from({ length: n }, () => rng.normal());
}

describe('stuck sensor (common practice: QARTOD flat-line test)', () => {
  // A run of exactly constant readings carries no information about the dynamics; windows inside it must give
  // no value at all (null), not the residue of sliding sums (variance ~1e-30, skewness ~1e10).
  it('windows inside a constant run give exactly null indicators, and the run is reported', async () => {
    const n = 400;
    const value = noise(n, 1).map((v) => 1e7 + v);
    value.fill(1e7 + 0.3, 150, 260);
    const time = Float64Array.from({ length: n }, (_, i) => i);
    const settings = analysisSettingsSchema.parse({ window: '40 points', detrend: 'gaussian', shiftDetection: 'off' });
    const r = await runAnalysis({ time, value, timeKind: 'numeric' }, settings);
    expect(r.quality.flatRuns).toEqual([{ from: 150, to: 259, points: 110 }]);
    for (const name of settings.indicators) {
      const v = r.indicators[name]!;
      for (let end = 150 + 39; end <= 259; end++) expect(v[end], `${name} at ${end}`).toBeNull();
      expect(v[150 + 38], name).not.toBeNull();
      expect(v[260], name).not.toBeNull();
    }
  });
});

describe('coverage of observed points', () => {
  it('windows whose observed share is below the floor are not judged (hand count)', () => {
    // 10 points, 3 interpolated at 3..5; windows of 5 starting at s = 0..5 hold 3,2,2,2,3,4 observed → below 0.8 (4 of 5): s = 0..4
    const observed = Uint8Array.from([1, 1, 1, 0, 0, 0, 1, 1, 1, 1]);
    const { skip, belowCoverage } = unjudgedWindows(observed, [], 5, 0.8);
    expect(Array.from(skip)).toEqual([1, 1, 1, 1, 1, 0]);
    expect(belowCoverage).toBe(5);
  });

  it('surrogates are interpolated at the points the record did not observe', () => {
    const value = noise(200, 2);
    const observed = new Uint8Array(200).fill(1);
    observed.fill(0, 50, 53);
    const job = prepareSurrogateJob(value, value, { method: 'ar1', seed: 4, w: 50, dt: 1, indicators: ['ac1'], observed });
    const s = makeSurrogate(job, 3);
    for (let k = 50; k < 53; k++) expect(s[k]).toBeCloseTo(s[49] + ((s[53] - s[49]) * (k - 49)) / 4, 12);
    const plain = Float64Array.from([1, 9, 9, 4]);
    expect(fillLinear(plain, Uint8Array.from([1, 0, 0, 1]))).toBe(2);
    expect(Array.from(plain)).toEqual([1, 2, 3, 4]);
  });
});

describe('sampling-interval changes (common practice: block medians of the spacing)', () => {
  const t0 = Date.UTC(2024, 0, 1);
  // 4 readings a day for 200 days, then 1 a day for 200 days
  const time = Float64Array.from([
    ...Array.from({ length: 800 }, (_, i) => t0 + i * 6 * HOUR),
    ...Array.from({ length: 200 }, (_, i) => t0 + 200 * 24 * HOUR + i * 24 * HOUR),
  ]);
  const value = noise(1000, 3);

  it('finds the change at the first reading on the new interval', () => {
    expect(detectSamplingChanges(time)).toEqual([{ index: 800, time: t0 + 200 * 24 * HOUR, before: 6 * HOUR, after: 24 * HOUR }]);
    const months = Float64Array.from({ length: 60 }, (_, i) => Date.UTC(2000 + Math.floor(i / 12), i % 12, 15));
    expect(detectSamplingChanges(months)).toEqual([]);
  });

  it('finds no change in irregularly timed records (Poisson times) or in a daily record with short gaps', () => {
    let spurious = 0;
    for (let s = 0; s < 50; s++) {
      const rng = new RandomStream(3, s);
      const poisson = new Float64Array(2000);
      const daily: number[] = [];
      for (let i = 1; i < 2000; i++) poisson[i] = poisson[i - 1] - Math.log(1 - rng.uniform());
      for (let i = 0; i < 2000; i++) if (i < 1000 || rng.uniform() > 0.17) daily.push(i * 24 * HOUR);
      spurious += detectSamplingChanges(poisson).length + detectSamplingChanges(Float64Array.from(daily)).length;
    }
    expect(spurious).toBe(0);
  });

  it("'start-after' analyses only the part after the change and says so", async () => {
    const r = await runAnalysis({ time, value }, analysisSettingsSchema.parse({ shiftDetection: 'off' }));
    expect(r.stretch).toEqual({ from: t0 + 200 * 24 * HOUR, to: t0 + 399 * 24 * HOUR, startsAfter: 'sampling' });
    expect(r.interval).toBe(24 * HOUR);
    expect(r.n).toBe(200);
    expect(r.quality.samplingHandling).toBe('start-after');
    expect(r.quality.coverage).toBe(1);
  });

  it("'subsample' takes the reading at each coarse grid instant, never an average", () => {
    const p = prepareSeries({ time, value }, { ...base, samplingChange: 'subsample' });
    expect(p.interval).toBe(24 * HOUR);
    expect(p.value.length).toBe(400);
    for (let d = 0; d < 200; d++) expect(p.value[d]).toBe(value[4 * d]);
    for (let d = 200; d < 400; d++) expect(p.value[d]).toBe(value[600 + d]);
    expect(p.quality.samplingChanges).toHaveLength(1);
    expect(p.quality.samplingHandling).toBe('subsample');
  });
});
