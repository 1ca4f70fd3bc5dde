import { FLAG_NOT_EVALUATED, FLAG_PASS, FLAG_SUSPECT } from './flags';

/**
 * Sampling-interval test: flag 3 when the step to this point, Δtₙ = tₙ − tₙ₋₁, differs from the expected interval Δ
 * by more than `tolerance` · Δ (a logger reprogrammed to another rate, a clock jump, a gap); else 1. The first point
 * stays 2. QARTOD's own timing test (the "Timing/Gap Test") judges whether data arrive when due; this one judges
 * the record's spacing, which is what an indicator computed per sampling interval assumes (common practice).
 * Cost O(n).
 */
export function samplingIntervalTest(time: Float64Array, expectedMs: number, tolerance: number): Uint8Array {
  const n = time.length;
  const flags = new Uint8Array(n);
  if (n) flags[0] = FLAG_NOT_EVALUATED;
  const allowed = tolerance * expectedMs;
  for (let i = 1; i < n; i++) flags[i] = Math.abs(time[i] - time[i - 1] - expectedMs) > allowed ? FLAG_SUSPECT : FLAG_PASS;
  return flags;
}
