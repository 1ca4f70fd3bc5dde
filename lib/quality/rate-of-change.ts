import { FLAG_NOT_EVALUATED, FLAG_PASS, FLAG_SUSPECT } from './flags';

/**
 * QARTOD rate of change test: flag 3 when |xₙ − xₙ₋₁| > N_DEV · SD, where SD is the sample standard deviation
 * (n − 1 denominator) of the readings in the preceding TIM_DEV period [tₙ − TIM_DEV, tₙ₋₁]; else 1. The test only
 * ever marks suspect. A point with fewer than two readings in its period stays 2. The period slides with two
 * pointers over sums of deviations from the series' first value (shifted sums, so a large offset costs no
 * precision). Cost O(n). Source: U.S. IOOS QARTOD manuals, "Rate of Change Test" (the manuals suggest TIM_DEV of
 * 25 hours; from memory).
 */
export function rateOfChangeTest(time: Float64Array, value: Float64Array, deviations: number, periodMs: number): Uint8Array {
  const n = value.length;
  const flags = new Uint8Array(n).fill(FLAG_NOT_EVALUATED);
  if (n === 0) return flags;
  const anchor = value[0];
  let sum = 0;
  let sumSquares = 0;
  let start = 0;
  for (let i = 1; i < n; i++) {
    // the period of point i is [tᵢ − period, tᵢ₋₁]: add point i − 1, drop what fell out of the period
    const added = value[i - 1] - anchor;
    sum += added;
    sumSquares += added * added;
    while (time[start] < time[i] - periodMs) {
      const dropped = value[start] - anchor;
      sum -= dropped;
      sumSquares -= dropped * dropped;
      start++;
    }
    const count = i - start;
    if (count < 2) continue;
    const variance = Math.max(0, (sumSquares - (sum * sum) / count) / (count - 1));
    flags[i] = Math.abs(value[i] - value[i - 1]) > deviations * Math.sqrt(variance) ? FLAG_SUSPECT : FLAG_PASS;
  }
  return flags;
}
