/**
 * Backtest speed: a 50,000-point record replayed every 10 points (ac1 and variance rules with Gaussian detrending,
 * and ac1 with the live defaults: local-linear detrending and shift detection), a calibration
 * with 200 AR(1) surrogates of a 5,000-point record on all cores (with 200 simulated approaches of each kind for
 * the ROC), and a rule's own calibration with a surrogate-p criterion (the full live procedure, every point, 99
 * surrogates per check) on a 2,000-point record. Targets: < 10 s, < 10 s, < 30 s and < 180 s.
 */
import { runBacktest } from '@/lib/backtest/run';
import type { ReplayRule } from '@/lib/backtest/replay';
import { simulateAr1 } from '@/lib/demo/models';
import { analysisSettingsSchema } from '@/lib/engine/settings';
import type { BenchRow } from './index';

const DAY = 86_400_000;

export const title = 'backtests';

function rule(indicator: 'ac1' | 'variance', maxSurrogateP: number | null = null): ReplayRule {
  return { indicator, minTau: 0.5, maxSurrogateP, levelThreshold: null, levelDirection: 'above', persistence: 2, quietPeriodHours: 0 };
}

function record(n: number, seed: number) {
  return {
    time: Float64Array.from({ length: n }, (_, i) => Date.UTC(1990, 0, 1) + i * DAY),
    value: simulateAr1({ n, phi: 0.7, sigma: 1, mean: 10, seed }),
  };
}

export async function run(): Promise<BenchRow[]> {
  const settings = analysisSettingsSchema.parse({ detrend: 'gaussian', bandwidth: 0.1, window: 0.5 });
  const big = record(50_000, 1);
  const t0 = performance.now();
  let steps = 0;
  for (const indicator of ['ac1', 'variance'] as const) {
    const r = await runBacktest({ ...big, intervalMs: DAY, settings, rule: rule(indicator), tippingPoints: [{ at: big.time[45_000] }], every: 10 });
    steps += r.steps;
  }
  const replay = (performance.now() - t0) / 1000;

  // the live default: local-linear point-in-time trend, with abrupt-shift detection over the record and its prefixes
  const tl = performance.now();
  const ll = await runBacktest({
    ...big,
    intervalMs: DAY,
    settings: analysisSettingsSchema.parse({ window: 0.5 }),
    rule: rule('ac1'),
    tippingPoints: [{ at: big.time[45_000] }],
    every: 10,
  });
  const localLinear = (performance.now() - tl) / 1000;

  const small = record(5_000, 2);
  const t1 = performance.now();
  const cal = await runBacktest({
    ...small,
    intervalMs: DAY,
    settings,
    rule: rule('ac1'),
    tippingPoints: [],
    every: 1,
    calibration: { surrogates: 200, method: 'ar1' },
  });
  const calibration = (performance.now() - t1) / 1000;

  const live = record(2_000, 3);
  const t2 = performance.now();
  const own = await runBacktest({
    ...live,
    intervalMs: DAY,
    settings: { ...settings, surrogates: 99 },
    rule: rule('ac1', 0.05),
    tippingPoints: [],
    every: 1,
    calibration: { surrogates: 200, method: 'ar1' },
  });
  const ruleCalibration = (performance.now() - t2) / 1000;
  const c = own.calibration!;
  return [
    {
      case: 'replay every 10 points, ac1 + variance (gaussian detrend)',
      n: 50_000,
      value: replay,
      unit: 's',
      target: '< 10 s',
      pass: replay < 10,
      note: `${steps} judged instants`,
    },
    {
      case: 'replay every 10 points, ac1 (local-linear detrend, shift detection on)',
      n: 50_000,
      value: localLinear,
      unit: 's',
      target: '< 10 s',
      pass: localLinear < 10,
      note: `${ll.steps} judged instants; ${ll.restarts.length} restarts`,
    },
    {
      case: 'calibration, 200 AR(1) surrogates, every point judged',
      n: 5_000,
      value: calibration,
      unit: 's',
      target: '< 30 s',
      pass: calibration < 30,
      note: `all cores; false-alarm rate ${(cal.calibration!.falseAlarmRate * 100).toFixed(1)} %`,
    },
    {
      case: 'rule calibration: live procedure with surrogate p ≤ 0.05 (99 per check), 200 surrogates, every point',
      n: 2_000,
      value: ruleCalibration,
      unit: 's',
      target: '< 180 s',
      pass: ruleCalibration < 180,
      note: `all cores; ${c.falseAlarmsPerYear?.toFixed(3)} false alarms a year; ${c.notJudgedSteps} replicate instants not judged`,
    },
  ];
}
