/**
 * Indicator engine speed (issue 3): gaussian detrend, rolling indicators, Kendall, the whole in-process
 * analysis at n = 1e4, 1e5, 1e6, how cost grows with n, 1,000 AR(1) surrogates at n = 1e4 and peak memory.
 * The command line on a 1e6-row file is timed in bench/cli.bench.ts.
 */
import { runAnalysis } from '../lib/engine/analyze';
import { detrend } from '../lib/engine/detrend';
import { indicatorTrends } from '../lib/engine/kendall';
import { RandomStream } from '../lib/engine/random';
import { evaluationStride, rollingIndicators } from '../lib/engine/rolling';
import { DEFAULT_INDICATORS, INDICATORS, INDICATOR_NAMES } from '../lib/engine/indicators';
import { analysisSettingsSchema, MAX_EVALUATED_WINDOWS } from '../lib/engine/settings';
import { computeSurrogateTaus } from '../lib/engine/surrogate-pool';
import { prepareSurrogateJob } from '../lib/engine/surrogates';
import { SITE_INDICATORS, runSiteAnalysis } from '../lib/engine/site';
import type { BenchRow } from './index';

export const title = 'engine';

/** AR(1) with a slowly rising coefficient on a smooth level: the kind of series the engine is for. */
export function series(n: number, seed = 1): Float64Array {
  const rng = new RandomStream(seed, 0);
  const x = new Float64Array(n);
  let e = 0;
  for (let i = 0; i < n; i++) {
    e = (0.3 + (0.6 * i) / n) * e + rng.normal();
    x[i] = 10 + Math.sin((6 * i) / n) + e;
  }
  return x;
}

function median(a: number[]): number {
  const s = [...a].sort((p, q) => p - q);
  return s[s.length >> 1];
}

async function timeIt(repeats: number, f: () => unknown): Promise<number> {
  const t: number[] = [];
  for (let i = 0; i < repeats; i++) {
    const t0 = performance.now();
    await f();
    t.push(performance.now() - t0);
  }
  return median(t);
}

export async function run(): Promise<BenchRow[]> {
  const rows: BenchRow[] = [];
  const settings = analysisSettingsSchema.parse({});
  const stage: Record<string, Record<number, number>> = { detrend: {}, rolling: {}, kendall: {}, whole: {} };
  for (const n of [1e4, 1e5, 1e6]) {
    const x = series(n);
    const time = Float64Array.from({ length: n }, (_, i) => i);
    const repeats = n >= 1e6 ? 3 : 5;
    const w = Math.round(0.5 * n);
    const d = detrend(x, 'gaussian', { bandwidthPoints: 0.1 * n, movingAverageWidth: 11 });
    const ind = rollingIndicators(d.residual, w, DEFAULT_INDICATORS, { raw: x, dt: 1 });
    stage.detrend[n] = await timeIt(repeats, () => detrend(x, 'gaussian', { bandwidthPoints: 0.1 * n, movingAverageWidth: 11 }));
    stage.rolling[n] = await timeIt(repeats, () => rollingIndicators(d.residual, w, DEFAULT_INDICATORS, { raw: x, dt: 1 }));
    stage.kendall[n] = await timeIt(repeats, () => indicatorTrends(ind));
    stage.whole[n] = await timeIt(repeats, () => runAnalysis({ time, value: x, timeKind: 'numeric' }, settings));
    rows.push({ case: 'gaussian detrend (bandwidth 0.1)', n, value: stage.detrend[n], unit: 'ms' });
    rows.push({ case: 'all 7 rolling indicators (window 0.5)', n, value: stage.rolling[n], unit: 'ms' });
    rows.push({ case: 'Kendall tau + p of all indicators', n, value: stage.kendall[n], unit: 'ms' });
    rows.push({
      case: 'whole analysis in process (defaults)',
      n,
      value: stage.whole[n],
      unit: 'ms',
      ...(n === 1e6 ? { target: '< 1000 ms', pass: stage.whole[n] < 1000 } : {}),
      note: `median of ${repeats}`,
    });
  }
  rows.push({
    case: 'peak RSS of this bench process after n = 1e6',
    n: 1e6,
    value: process.resourceUsage().maxRSS / 1024,
    unit: 'MB',
    note: 'upper bound (includes the harness)',
  });
  for (const [name, t] of Object.entries(stage)) {
    const ratio = t[1e6] / t[1e5];
    // No target: the issue asks how cost grows; O(n) gives 10×, O(n log n) about 12× (cache effects add more).
    rows.push({ case: `cost growth 1e5 → 1e6: ${name}`, n: '1e5→1e6', value: ratio, unit: '×', note: 'O(n) ≈ 10, O(n log n) ≈ 12' });
  }

  const x4 = series(1e4, 2);
  const job = prepareSurrogateJob(detrend(x4, 'gaussian', { bandwidthPoints: 1e3, movingAverageWidth: 11 }).residual, x4, {
    method: 'ar1',
    seed: 1,
    w: 5000,
    dt: 1,
    indicators: [...DEFAULT_INDICATORS],
  });
  let workers = 0;
  const tSur = await timeIt(1, async () => {
    workers = (await computeSurrogateTaus(job, 1000)).workers;
  });
  rows.push({
    case: '1,000 AR(1) surrogates, default indicators',
    n: 1e4,
    value: tSur,
    unit: 'ms',
    target: '< 5000 ms',
    pass: tSur < 5000,
    note: `${workers} worker threads`,
  });

  rows.push(...(await eachIndicator()));
  return rows;
}

/**
 * Each indicator alone at n = 1e5 and 1e6 (window 0.5, so 5e4 and 5e5 windows of 5e4 and 5e5 points), the per-window
 * ones at the default stride (at most MAX_EVALUATED_WINDOWS windows); then the whole analysis at 1e6 with every
 * indicator (issue 17: under 30 s) and with the O(1) set (under 2 s).
 */
async function eachIndicator(): Promise<BenchRow[]> {
  const rows: BenchRow[] = [];
  for (const n of [1e5, 1e6]) {
    const x = series(n);
    const d = detrend(x, 'gaussian', { bandwidthPoints: 0.1 * n, movingAverageWidth: 11 });
    const w = Math.round(0.5 * n);
    const stride = evaluationStride(n - w + 1, MAX_EVALUATED_WINDOWS);
    for (const definition of INDICATORS) {
      const perWindow = definition.kind === 'window';
      const t = await timeIt(perWindow ? 1 : 3, () => rollingIndicators(d.residual, w, [definition.name], { raw: x, dt: 1, stride }));
      rows.push({
        case: `indicator ${definition.name} (window 0.5)`,
        n,
        value: t,
        unit: 'ms',
        note: perWindow ? `${Math.floor((n - w) / stride) + 1} windows evaluated (every ${stride}th), ${definition.cost}` : definition.cost,
      });
    }
  }
  rows.push(...(await siteIndicators()));
  const n = 1e6;
  const x = series(n);
  const time = Float64Array.from({ length: n }, (_, i) => i);
  const constantCost = INDICATORS.filter((d) => d.kind === 'moments').map((d) => d.name);
  const every = await timeIt(1, () => runAnalysis({ time, value: x, timeKind: 'numeric' }, analysisSettingsSchema.parse({ indicators: [...INDICATOR_NAMES] })));
  rows.push({
    case: 'whole analysis, every indicator',
    n,
    value: every,
    unit: 'ms',
    target: '< 30000 ms',
    pass: every < 30_000,
    note: `maxEvaluatedWindows ${MAX_EVALUATED_WINDOWS}`,
  });
  const constant = await timeIt(3, () => runAnalysis({ time, value: x, timeKind: 'numeric' }, analysisSettingsSchema.parse({ indicators: constantCost })));
  rows.push({
    case: 'whole analysis, the O(1) indicators',
    n,
    value: constant,
    unit: 'ms',
    target: '< 2000 ms',
    pass: constant < 2000,
    note: constantCost.join(', '),
  });
  return rows;
}

/** Sensors of one site in the site-level bench rows. */
const SITE_SERIES = 3;

/**
 * The site-level indicators (pc1-variance, pc1-share, maf-ac1 together: one eigen-decomposition serves all three)
 * over three series at n = 1e5 and 1e6 on one grid: each column detrended (gaussian, bandwidth 0.1), windows of
 * 0.5, evaluated at the default stride, no surrogates.
 */
async function siteIndicators(): Promise<BenchRow[]> {
  const rows: BenchRow[] = [];
  const settings = analysisSettingsSchema.parse({ window: 0.5, bandwidth: 0.1, detrend: 'gaussian', surrogates: 0 });
  for (const n of [1e5, 1e6]) {
    const values = Array.from({ length: SITE_SERIES }, (_, k) => series(n, k + 1));
    const t = await timeIt(1, () => runSiteAnalysis({ values }, settings));
    const w = Math.round(0.5 * n);
    const stride = evaluationStride(n - w + 1, MAX_EVALUATED_WINDOWS);
    rows.push({
      case: `site indicators ${SITE_INDICATORS.map((d) => d.name).join(', ')} (${SITE_SERIES} series, window 0.5)`,
      n,
      value: t,
      unit: 'ms',
      note: `${Math.floor((n - w) / stride) + 1} windows evaluated (every ${stride}th), O(w·k² + k³) each, plus k detrendings`,
    });
  }
  return rows;
}
