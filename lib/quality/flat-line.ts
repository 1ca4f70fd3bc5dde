import { FLAG_FAIL, FLAG_NOT_EVALUATED, FLAG_PASS, FLAG_SUSPECT } from './flags';

/**
 * QARTOD flat line test (a stuck sensor): flag 4 when each of the previous REP_CNT_FAIL readings lies within EPS of
 * this one, |xₙ − xₙ₋ᵢ| ≤ EPS for i = 1…REP_CNT_FAIL; flag 3 when that holds for i = 1…REP_CNT_SUSPECT; else 1.
 * The manuals write < EPS; ≤ is used here so that EPS = 0 catches exact repeats, the usual stuck logger. A point
 * with fewer than REP_CNT_SUSPECT readings before it stays 2. Cost O(n · REP_CNT_FAIL) at worst (each point looks
 * back until the first reading off the line). Source: U.S. IOOS QARTOD manuals, "Flat Line Test" (from memory).
 */
export function flatLineTest(value: Float64Array, tolerance: number, suspectCount: number, failCount: number): Uint8Array {
  const n = value.length;
  const flags = new Uint8Array(n);
  for (let i = 0; i < n; i++) {
    if (i < suspectCount) {
      flags[i] = FLAG_NOT_EVALUATED;
      continue;
    }
    let run = 0;
    const reach = Math.min(failCount, i);
    while (run < reach && Math.abs(value[i] - value[i - run - 1]) <= tolerance) run++;
    flags[i] = run >= failCount ? FLAG_FAIL : run >= suspectCount ? FLAG_SUSPECT : FLAG_PASS;
  }
  return flags;
}
