/**
 * Shift detector speed: detectShifts on AR(1) records (φ = 0.9) of 1e4 to 1e6 points, without any shift and with
 * a level shift every 50,000 points (the scan is O(n) either way; the shifts add only the local-maximum search).
 */
import { simulateAr1 } from '../lib/demo/models';
import { detectShifts } from '../lib/engine/shifts';
import type { BenchRow } from './index';

export const title = 'shifts';

function median(a: number[]): number {
  const s = [...a].sort((p, q) => p - q);
  return s[s.length >> 1];
}

function timeIt(repeats: number, f: () => unknown): number {
  const t: number[] = [];
  for (let i = 0; i < repeats; i++) {
    const t0 = performance.now();
    f();
    t.push(performance.now() - t0);
  }
  return median(t);
}

export async function run(): Promise<BenchRow[]> {
  const rows: BenchRow[] = [];
  for (const n of [1e4, 1e5, 1e6]) {
    const x = simulateAr1({ n, phi: 0.9, sigma: 1, seed: 31 });
    const ms = timeIt(5, () => detectShifts(x));
    rows.push({
      case: 'detectShifts, AR(1) phi 0.9, no shift',
      n,
      value: ms,
      unit: 'ms',
      ...(n === 1e6 ? { target: '< 1000 ms', pass: ms < 1000 } : {}),
      note: 'median of 5',
    });
  }
  const n = 1e6;
  const x = simulateAr1({ n, phi: 0.9, sigma: 1, seed: 32 });
  // A step of 5 long-run sd (σ/(1 − φ) = 10) every 50,000 points, alternating up and down.
  for (let i = 0; i < n; i++) x[i] += Math.floor(i / 50_000) % 2 === 1 ? 50 : 0;
  let found = 0;
  const ms = timeIt(5, () => {
    found = detectShifts(x).length;
  });
  rows.push({
    case: 'detectShifts, AR(1) phi 0.9, 19 shifts',
    n,
    value: ms,
    unit: 'ms',
    target: '< 1000 ms',
    pass: ms < 1000,
    note: `median of 5; ${found} found`,
  });
  return rows;
}
