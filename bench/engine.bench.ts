/**
 * Indicator engine speed (issue 3): gaussian detrend, rolling indicators, Kendall, the whole in-process
 * analysis at n = 1e4, 1e5, 1e6, how cost grows with n, 1,000 AR(1) surrogates at n = 1e4, the whole
 * `analyze --summary` command on a generated 1e6-row CSV, peak memory, and (when python3 with numpy and
 * scipy is present) the same job as a vectorised numpy/scipy script for comparison.
 */
import { spawnSync } from 'node:child_process';
import { existsSync, mkdirSync, writeFileSync } from 'node:fs';
import path from 'node:path';
import { runAnalysis } from '../lib/engine/analyze';
import { detrend } from '../lib/engine/detrend';
import { indicatorTrends } from '../lib/engine/kendall';
import { RandomStream } from '../lib/engine/random';
import { rollingIndicators } from '../lib/engine/rolling';
import { analysisSettingsSchema, INDICATOR_NAMES } from '../lib/engine/settings';
import { computeSurrogateTaus } from '../lib/engine/surrogate-pool';
import { prepareSurrogateJob } from '../lib/engine/surrogates';
import type { BenchRow } from './index';

export const title = 'engine';

const root = path.resolve(__dirname, '..');
const outDir = path.join(root, 'bench', 'output');

/** AR(1) with a slowly rising coefficient on a smooth level: the kind of series the engine is for. */
function series(n: number, seed = 1): Float64Array {
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

function commandTime(cmd: string, args: string[]): { ms: number; rssMb: number | null; ok: boolean } {
  const timeBin = '/usr/bin/time';
  const useTime = existsSync(timeBin);
  const t0 = performance.now();
  const r = useTime
    ? spawnSync(timeBin, ['-f', '%M', cmd, ...args], { cwd: root, encoding: 'utf8', maxBuffer: 1 << 28 })
    : spawnSync(cmd, args, { cwd: root, encoding: 'utf8', maxBuffer: 1 << 28 });
  const ms = performance.now() - t0;
  const kb = useTime ? Number(r.stderr.trim().split('\n').pop()) : Number.NaN;
  return { ms, rssMb: Number.isFinite(kb) ? kb / 1024 : null, ok: r.status === 0 };
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
    const ind = rollingIndicators(d.residual, w, INDICATOR_NAMES, { raw: x, dt: 1 });
    stage.detrend[n] = await timeIt(repeats, () => detrend(x, 'gaussian', { bandwidthPoints: 0.1 * n, movingAverageWidth: 11 }));
    stage.rolling[n] = await timeIt(repeats, () => rollingIndicators(d.residual, w, INDICATOR_NAMES, { raw: x, dt: 1 }));
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
  rows.push({ case: 'peak RSS of this bench process after n = 1e6', n: 1e6, value: process.resourceUsage().maxRSS / 1024, unit: 'MB', note: 'upper bound (includes the harness)' });
  for (const [name, t] of Object.entries(stage)) {
    const ratio = t[1e6] / t[1e5];
    // No target: the issue asks how cost grows; O(n) gives 10×, O(n log n) about 12× (cache effects add more).
    rows.push({ case: `cost growth 1e5 → 1e6: ${name}`, n: '1e5→1e6', value: ratio, unit: '×', note: 'O(n) ≈ 10, O(n log n) ≈ 12' });
  }

  const x4 = series(1e4, 2);
  const job = prepareSurrogateJob(detrend(x4, 'gaussian', { bandwidthPoints: 1e3, movingAverageWidth: 11 }).residual, x4, {
    method: 'ar1', seed: 1, w: 5000, dt: 1, indicators: [...INDICATOR_NAMES],
  });
  let workers = 0;
  const tSur = await timeIt(1, async () => {
    workers = (await computeSurrogateTaus(job, 1000)).workers;
  });
  rows.push({ case: '1,000 AR(1) surrogates, all indicators', n: 1e4, value: tSur, unit: 'ms', target: '< 5000 ms', pass: tSur < 5000, note: `${workers} worker threads` });

  mkdirSync(outDir, { recursive: true });
  const csv = path.join(outDir, 'engine-1e6.csv');
  const big = series(1e6, 3);
  const lines = ['t,value'];
  for (let i = 0; i < big.length; i++) lines.push(`${i},${big[i].toFixed(6)}`);
  writeFileSync(csv, `${lines.join('\n')}\n`);
  const runs = [commandTime('npm', ['run', '--silent', 'analyze', '--', csv, '--summary']), commandTime('npm', ['run', '--silent', 'analyze', '--', csv, '--summary'])];
  const best = runs.reduce((a, b) => (b.ms < a.ms ? b : a));
  rows.push({ case: 'npm run analyze -- FILE --summary (1e6-row CSV)', n: 1e6, value: best.ms, unit: 'ms', target: '< 2500 ms', pass: best.ok && best.ms < 2500, note: 'best of 2, includes npm + tsx start' });
  if (best.rssMb !== null) rows.push({ case: 'peak RSS of that command', n: 1e6, value: best.rssMb, unit: 'MB', target: '< 500 MB', pass: best.rssMb < 500 });

  const script = path.resolve(root, '../shared/bench/numpy_pipeline.py');
  const probe = spawnSync('python3', ['-c', 'import numpy, scipy'], { encoding: 'utf8' });
  if (existsSync(script) && probe.status === 0) {
    const py = commandTime('python3', [script, csv, '0.1', '0.5']);
    rows.push({ case: 'numpy/scipy script, same CSV (for comparison)', n: 1e6, value: py.ms, unit: 'ms', note: py.ok ? '' : 'script failed' });
    if (py.ok) rows.push({ case: 'ratio analyze / numpy script', n: 1e6, value: best.ms / py.ms, unit: '×', note: '< 1 means Brinkwatch is faster' });
  } else {
    rows.push({ case: 'numpy/scipy comparison', value: Number.NaN, unit: '', note: 'skipped: python3 with numpy/scipy or the script is not available' });
  }
  return rows;
}
