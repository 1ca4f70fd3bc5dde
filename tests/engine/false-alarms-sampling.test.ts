import { describe, expect, it } from 'vitest';
import type { RandomStream } from '@/lib/engine/random';
import { DAY, rejectionCounts } from './null-models';

/**
 * White noise read 4 times a day for 100 days, then once a day for 300 days. Gridded at the median spacing
 * (6 h), the daily part would be three-quarters interpolated and its ac1 would climb towards 1 (issue 13: τ = 0.998,
 * p = 0.01); the change must be found and handled.
 */
function fourThenOne(rng: RandomStream) {
  const t: number[] = [];
  for (let i = 0; i < 400; i++) t.push(i * (DAY / 4));
  for (let i = 0; i < 300; i++) t.push(100 * DAY + i * DAY);
  return { time: Float64Array.from(t, (v) => Date.UTC(2021, 0, 1) + v), value: Float64Array.from(t, () => rng.normal()) };
}

// Bounds: rejectionCounts (central 99.9% of Binomial(300, 0.05) = [4, 29]). Measured while writing with 400
// replicates and other seeds ('start-after'): ac1 15/400, variance 26/400.
describe('false alarms at the nominal rate across a change of sampling interval', () => {
  for (const samplingChange of ['start-after', 'subsample'] as const) {
    it(`white noise, 4 readings a day then 1: '${samplingChange}'`, async () => {
      const { counts, lo, hi } = await rejectionCounts(300, ['variance', 'ac1', 'recovery'], fourThenOne, { samplingChange, detrend: 'linear' });
      for (const [k, c] of Object.entries(counts)) {
        expect(c, k).toBeGreaterThanOrEqual(lo);
        expect(c, k).toBeLessThanOrEqual(hi);
      }
    });
  }
});
