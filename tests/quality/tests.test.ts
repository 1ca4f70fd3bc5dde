import { describe, expect, it } from 'vitest';
import { sampleStandardDeviation } from 'simple-statistics';
import { grossRangeTest } from '@/lib/quality/gross-range';
import { spikeTest } from '@/lib/quality/spike';
import { rateOfChangeTest } from '@/lib/quality/rate-of-change';
import { flatLineTest } from '@/lib/quality/flat-line';
import { samplingIntervalTest } from '@/lib/quality/sampling-interval';
import { runQualityTests } from '@/lib/quality/run';
import { FLAG_SETTERS, setterName } from '@/lib/quality/flags';
import { qcConfigSchema } from '@/lib/schemas/quality';

const f64 = (values: number[]) => Float64Array.from(values);
const HOUR = 3_600_000;

// Every expected flag below is worked by hand from the test's formula as the U.S. IOOS QARTOD manuals define it
// (flag scale 1 pass, 2 not evaluated, 3 suspect, 4 fail; formulas from memory, see each file's doc comment).
describe('QARTOD tests on hand-computed cases', () => {
  it('gross range: outside the sensor limits fails, outside the user limits is suspect, the limits pass', () => {
    const flags = grossRangeTest(f64([-3, -2, 0, 5, 10, 11, 40, 35]), [-2.5, 35], [0, 10]);
    expect(Array.from(flags)).toEqual([4, 3, 1, 1, 1, 3, 4, 3]);
    expect(Array.from(grossRangeTest(f64([-3, 0, 36]), [-2.5, 35]))).toEqual([4, 1, 4]);
  });

  it('spike: |xₙ − (xₙ₋₁ + xₙ₊₁)/2| against the two thresholds; both ends not evaluated', () => {
    // i=1: |1 − 3| = 2 → 3; i=2: |5 − 1| = 4 → 4; i=3: |1 − 3| = 2 → 3; i=4: |1 − 1.3| = 0.3 → 1; i=5: |1.6 − 1| = 0.6 → 1
    expect(Array.from(spikeTest(f64([1, 1, 5, 1, 1, 1.6, 1]), 1, 3))).toEqual([2, 3, 4, 3, 1, 1, 2]);
    // exactly at a threshold is not above it
    expect(Array.from(spikeTest(f64([0, 2, 0]), 2, 3))).toEqual([2, 1, 2]);
  });

  it('rate of change: a step beyond N standard deviations of the preceding period is suspect', () => {
    const time = f64([0, 1, 2, 3, 4, 5, 6].map((h) => h * HOUR));
    const value = f64([0, 1, 0, 1, 0, 1, 10]);
    // i=1: one reading in its period → 2; i=2: SD(0, 1) = 0.707, |0 − 1| = 1 ≤ 2.12 → 1;
    // i=6: SD of 0,1,0,1,0,1 = 0.548 (checked with simple-statistics below), |10 − 1| = 9 > 1.64 → 3
    expect(sampleStandardDeviation([0, 1, 0, 1, 0, 1])).toBeCloseTo(0.5477, 4);
    expect(Array.from(rateOfChangeTest(time, value, 3, 10 * HOUR))).toEqual([2, 2, 1, 1, 1, 1, 3]);
    // a two-hour period holds only the two readings before: at i=6 they are 0 and 1
    expect(Array.from(rateOfChangeTest(time, value, 3, 2 * HOUR))[6]).toBe(3);
  });

  it('rate of change: the sliding SD equals a direct one on a long noisy record with a large offset', () => {
    const n = 500;
    const time = new Float64Array(n);
    const value = new Float64Array(n);
    let state = 7;
    for (let i = 0; i < n; i++) {
      state = (state * 16807) % 2147483647;
      time[i] = i * 600_000;
      value[i] = 1e6 + (state / 2147483647 - 0.5) * (i === 400 ? 50 : 1);
    }
    const flags = rateOfChangeTest(time, value, 3, 25 * HOUR);
    for (let i = 2; i < n; i++) {
      const window = Array.from(value.subarray(0, i)).filter((_, k) => time[k] >= time[i] - 25 * HOUR);
      const expected = Math.abs(value[i] - value[i - 1]) > 3 * sampleStandardDeviation(window) ? 3 : 1;
      expect(flags[i]).toBe(expected);
    }
  });

  it('flat line: the previous REP_CNT readings within EPS of this one', () => {
    // i=2: one equal reading before → 1; i=3: two → 3; i=4: three → 3; i=5: four → 4; i=6 moved → 1
    expect(Array.from(flatLineTest(f64([1, 2, 2, 2, 2, 2, 3]), 0, 2, 4))).toEqual([2, 2, 1, 3, 3, 4, 1]);
    // a tolerance lets a sensor that drifts by less than it count as flat
    expect(Array.from(flatLineTest(f64([5, 5.01, 5.02, 5.01, 5.0]), 0.05, 2, 3))).toEqual([2, 2, 3, 4, 4]);
  });

  it('sampling interval: a step off the expected interval by more than the tolerance is suspect', () => {
    const time = f64([0, 60, 120, 185, 300, 330].map((s) => s * 1000));
    expect(Array.from(samplingIntervalTest(time, 60_000, 0.1))).toEqual([2, 1, 1, 1, 3, 3]);
  });
});

describe('runQualityTests', () => {
  it('keeps the most severe flag and names the setter; source flags count like a test', () => {
    const time = f64([0, 1, 2, 3, 4].map((h) => h * HOUR));
    const value = f64([1, 1, 50, 1, 1]);
    const config = qcConfigSchema.parse({ grossRange: { fail: [-10, 40] }, spike: { suspect: 5, fail: 20 } });
    const sourceFlag = Uint8Array.from([0, 3, 0, 0, 4]);
    const { flag, setter } = runQualityTests(time, value, config, { sourceFlag });
    expect(Array.from(flag)).toEqual([1, 4, 4, 4, 4]);
    expect(Array.from(setter, setterName)).toEqual(['gross-range', 'spike', 'gross-range', 'spike', 'source']);
  });

  it('leaves every point not evaluated without tests or source flags', () => {
    const { flag, setter } = runQualityTests(f64([0, 1]), f64([3, 4]), null);
    expect(Array.from(flag)).toEqual([2, 2]);
    expect(Array.from(setter)).toEqual([0, 0]);
  });

  it('runs the sampling-interval test on the series interval when the settings give none', () => {
    const config = qcConfigSchema.parse({ samplingInterval: {} });
    const { flag } = runQualityTests(f64([0, 1000, 2000, 5000]), f64([1, 1, 1, 1]), config, { intervalMs: 1000 });
    expect(Array.from(flag)).toEqual([2, 1, 1, 3]);
    expect(FLAG_SETTERS).toContain('sampling-interval');
  });

  it('refuses inconsistent settings', () => {
    expect(qcConfigSchema.safeParse({ grossRange: { fail: [5, 1] } }).success).toBe(false);
    expect(qcConfigSchema.safeParse({ grossRange: { fail: [0, 10], suspect: [-1, 5] } }).success).toBe(false);
    expect(qcConfigSchema.safeParse({ spike: { suspect: 4, fail: 2 } }).success).toBe(false);
    expect(qcConfigSchema.safeParse({ flatLine: { tolerance: 0, suspect: 5, fail: 3 } }).success).toBe(false);
    expect(qcConfigSchema.safeParse({ unknownTest: {} }).success).toBe(false);
  });
});
