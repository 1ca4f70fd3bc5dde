/**
 * Backtest speed: a 50,000-point record replayed every 10 points (ac1 and variance rules), and a calibration
 * with 200 AR(1) surrogates of a 5,000-point record on all cores. Targets: < 10 s and < 30 s.
 * Run alone with `npx tsx bench/backtest.ts`, or through `npm run bench`.
 */
import { pathToFileURL } from 'node:url';
import { runBacktest } from '@/lib/backtest/run';
import type { ReplayRule } from '@/lib/backtest/replay';
import { simulateAr1 } from '@/lib/demo/models';
import { analysisSettingsSchema } from '@/lib/engine/settings';

const DAY = 86_400_000;

export interface BenchRow {
  name: string;
  seconds: number;
  targetSeconds: number;
  note: string;
}

function rule(indicator: 'ac1' | 'variance'): ReplayRule {
  return { indicator, minTau: 0.5, maxKendallP: null, maxSurrogateP: null, levelThreshold: null, levelDirection: 'above', persistence: 2, quietPeriodHours: 0 };
}

function record(n: number, seed: number) {
  return {
    time: Float64Array.from({ length: n }, (_, i) => Date.UTC(1990, 0, 1) + i * DAY),
    value: simulateAr1({ n, phi: 0.7, sigma: 1, mean: 10, seed }),
  };
}

export async function benchBacktest(): Promise<BenchRow[]> {
  const rows: BenchRow[] = [];
  const settings = analysisSettingsSchema.parse({ detrend: 'gaussian', bandwidth: 0.1, window: 0.5 });
  const big = record(50_000, 1);
  const t0 = performance.now();
  let steps = 0;
  for (const indicator of ['ac1', 'variance'] as const) {
    const r = await runBacktest({ ...big, intervalMs: DAY, settings, rule: rule(indicator), transitions: [{ at: big.time[45_000] }], every: 10 });
    steps += r.steps;
  }
  rows.push({ name: 'backtest 50,000 points, every 10, ac1 + variance', seconds: (performance.now() - t0) / 1000, targetSeconds: 10, note: `${steps} judged instants, gaussian detrending` });

  const small = record(5_000, 2);
  const t1 = performance.now();
  const cal = await runBacktest({ ...small, intervalMs: DAY, settings, rule: rule('ac1'), transitions: [], every: 1, calibration: { surrogates: 200, method: 'ar1' } });
  rows.push({
    name: 'calibration 200 AR(1) surrogates × 5,000 points',
    seconds: (performance.now() - t1) / 1000,
    targetSeconds: 30,
    note: `every point judged; false-alarm rate ${(cal.calibration!.falseAlarmRate * 100).toFixed(1)} %`,
  });
  return rows;
}

export function printBenchRows(rows: BenchRow[]): void {
  console.table(rows.map((r) => ({ benchmark: r.name, seconds: r.seconds.toFixed(2), target: `< ${r.targetSeconds} s`, ok: r.seconds < r.targetSeconds ? 'yes' : 'NO', note: r.note })));
}

if (process.argv[1] && import.meta.url === pathToFileURL(process.argv[1]).href) {
  void benchBacktest().then(printBenchRows);
}
