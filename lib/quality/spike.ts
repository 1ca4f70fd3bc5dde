import { FLAG_FAIL, FLAG_NOT_EVALUATED, FLAG_PASS, FLAG_SUSPECT } from './flags';

/**
 * QARTOD spike test: SPK_REF = (xₙ₋₁ + xₙ₊₁)/2; flag 4 when |xₙ − SPK_REF| > THRSHLD_HIGH (`fail`), flag 3 when
 * THRSHLD_LOW (`suspect`) < |xₙ − SPK_REF| ≤ THRSHLD_HIGH, else 1. The first and the last point lack a neighbour
 * and stay 2 (not evaluated) until one arrives. Cost O(n). Source: U.S. IOOS QARTOD manuals, "Spike Test"
 * (formula and strict inequalities from memory).
 */
export function spikeTest(value: Float64Array, suspect: number, fail: number): Uint8Array {
  const n = value.length;
  const flags = new Uint8Array(n).fill(FLAG_NOT_EVALUATED);
  for (let i = 1; i < n - 1; i++) {
    const deviation = Math.abs(value[i] - (value[i - 1] + value[i + 1]) / 2);
    flags[i] = deviation > fail ? FLAG_FAIL : deviation > suspect ? FLAG_SUSPECT : FLAG_PASS;
  }
  return flags;
}
