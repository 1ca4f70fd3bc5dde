import { cessiFolds, simulateCessi } from '@/lib/demo/models';

const DAY_MS = 86_400_000;
const MU2 = 6.2;
const P0 = 0.6;

/**
 * A daily record of Cessi's (1994) box model whose freshwater forcing ramps towards the rising fold, which it
 * would reach a little after sample `n` (at 1.1·n): critical slowing down throughout, no collapse inside the
 * record. Seeded, so every run of the tests sees the same numbers.
 */
export function foldRecord(n: number, seed = 20260101, start = Date.UTC(2022, 0, 1)): { t: number; value: number }[] {
  const dt = 0.05;
  const { rising } = cessiFolds(MU2);
  const rate = (rising.p - P0) / (1.1 * n * dt);
  const run = simulateCessi({ mu2: MU2, p0: P0, sigma: 0.04, n, dt, substeps: 10, rate, seed });
  return Array.from(run.values, (value, i) => ({ t: start + i * DAY_MS, value }));
}
