import { accurateMean } from './detrend';
import { orientedTau, type TrendDirection } from './direction';
import { dft } from './fft';
import { needsRawMean } from './indicators';
import { indicatorTrends } from './kendall';
import { fillLinear } from './prepare';
import { RandomStream } from './random';
import { rollingIndicators, windowMoments } from './rolling';
import type { IndicatorName, SurrogateMethod } from './settings';

/** Everything needed to draw surrogates and score them; plain data, so it can be posted to a worker. */
export interface SurrogateJob {
  method: SurrogateMethod;
  n: number;
  seed: number;
  w: number;
  dt: number;
  indicators: IndicatorName[];
  /** Per-window indicators are evaluated at every `stride`-th window from the latest, as in the record (rollingIndicators). */
  stride: number;
  /** Rolling mean of the observed raw values (the cv denominator is kept from the observed series). */
  rawMean: Float64Array | null;
  ar1: { phi: number; innovationSd: number; mean: number } | null;
  /** DFT of the residual (phase method). */
  spectrum: { re: Float64Array; im: Float64Array } | null;
  /** The record's observed mask (1 observed, 0 interpolated): each surrogate is interpolated at the same points. */
  observed: Uint8Array | null;
  /** Windows the record does not judge (unjudgedWindows); the surrogates skip the same ones. */
  skip: Uint8Array | null;
}

/**
 * AR(1) fit to a residual series: φ = r(1) (the NIST StRD lag-1 autocorrelation, a Yule–Walker
 * estimate), innovation variance σ² = s²(1 − φ²) with s² the sample variance (denominator n − 1), mean
 * kept. With an observed mask, only observed points enter the mean and variance and only pairs of observed
 * neighbours the lag-1 sum, φ = [Σ_pairs d_i d_{i+1}/#pairs]/[Σ_obs d_i²/#obs], so interpolated points, which are
 * smoother than data, do not inflate φ. O(n). Source: Box, Jenkins, Reinsel & Ljung (2015), Time Series
 * Analysis, 5th ed., Ch. 3 and 7 (from memory); lag products over available pairs as in Parzen (1963),
 * "On spectral analysis with missing observations and amplitude modulation", Sankhyā A 25, 383–392 (from memory).
 */
export function fitAr1(r: Float64Array, observed: Uint8Array | null = null): { phi: number; innovationSd: number; mean: number } {
  const n = r.length;
  let mean: number;
  if (observed) {
    let sum = 0,
      m = 0;
    for (let i = 0; i < n; i++)
      if (observed[i]) {
        sum += r[i];
        m++;
      }
    mean = sum / m;
  } else mean = accurateMean(r);
  let num = 0,
    den = 0,
    pairs = 0,
    points = 0;
  for (let i = 0; i < n; i++) {
    if (observed && !observed[i]) continue;
    const d = r[i] - mean;
    den += d * d;
    points++;
    if (i + 1 < n && (!observed || observed[i + 1])) {
      num += d * (r[i + 1] - mean);
      pairs++;
    }
  }
  const ratio = observed ? num / pairs / (den / points) : num / den;
  const phi = den > 0 && pairs > 0 ? Math.max(-0.999999, Math.min(0.999999, ratio)) : 0;
  const variance = points > 1 ? den / (points - 1) : 0;
  return { phi, innovationSd: Math.sqrt(variance * (1 - phi * phi)), mean };
}

/**
 * Surrogate job for a residual series: the AR(1) fit (fitAr1, on observed points when a mask is given) or the DFT
 * X_k = Σ_j r_j e^{−2πijk/n}, plus the observed rolling raw means for cv, and the record's observed mask and
 * unjudged windows, which every surrogate shares. O(n), O(n log n) for phase. Source: Theiler et al. (1992).
 */
export function prepareSurrogateJob(
  residual: Float64Array,
  raw: Float64Array,
  base: {
    method: SurrogateMethod;
    seed: number;
    w: number;
    dt: number;
    indicators: IndicatorName[];
    stride?: number;
    observed?: Uint8Array | null;
    skip?: Uint8Array | null;
  },
): SurrogateJob {
  const observed = base.observed && base.observed.includes(0) ? base.observed : null;
  return {
    ...base,
    stride: base.stride ?? 1,
    n: residual.length,
    rawMean: needsRawMean(base.indicators) ? windowMoments(raw, base.w).mean : null,
    ar1: base.method === 'ar1' ? fitAr1(residual, observed) : null,
    spectrum: base.method === 'phase' ? dft(residual, new Float64Array(residual.length)) : null,
    observed,
    skip: base.skip && base.skip.includes(1) ? base.skip : null,
  };
}

/**
 * Surrogate number `index` of a job, from its own random stream (seed, index).
 * ar1: x_0 ~ N(μ, σ²/(1−φ²)) (stationary start), x_t = μ + φ(x_{t−1} − μ) + σ ε_t.
 * phase: X̃_k = |X_k| e^{iθ_k} with θ_k uniform on [0, 2π) for 0 < k < n/2, X̃_{n−k} = conj X̃_k; the mean
 * (k = 0) and, for even n, the Nyquist term are kept, so the periodogram is unchanged.
 * Then, when the record had gaps, the points it did not observe are replaced by linear interpolation
 * (fillLinear with its mask), so a gap smooths the surrogate exactly as it smoothed the record.
 * Cost O(n) for ar1, O(n log n) for phase. Sources: Theiler et al. (1992), "Testing for nonlinearity in
 * time series: the method of surrogate data", Physica D 58, 77–94; Gillespie (1996), Phys. Rev. E 54, 2084.
 */
export function makeSurrogate(job: SurrogateJob, index: number): Float64Array {
  const rng = new RandomStream(job.seed, index);
  const n = job.n;
  if (job.method === 'ar1') {
    const { phi, innovationSd, mean } = job.ar1!;
    const out = new Float64Array(n);
    let x = (innovationSd / Math.sqrt(1 - phi * phi)) * rng.normal();
    for (let t = 0; t < n; t++) {
      if (t > 0) x = phi * x + innovationSd * rng.normal();
      out[t] = mean + x;
    }
    if (job.observed) fillLinear(out, job.observed);
    return out;
  }
  const { re, im } = job.spectrum!;
  const sr = new Float64Array(n);
  const si = new Float64Array(n);
  sr[0] = re[0];
  for (let k = 1; 2 * k < n; k++) {
    const amp = Math.hypot(re[k], im[k]);
    const theta = 2 * Math.PI * rng.uniform();
    sr[k] = amp * Math.cos(theta);
    si[k] = amp * Math.sin(theta);
    sr[n - k] = sr[k];
    si[n - k] = -si[k];
  }
  if (n % 2 === 0) sr[n / 2] = re[n / 2];
  const out = dft(sr, si, true).re;
  if (job.observed) fillLinear(out, job.observed);
  return out;
}

/**
 * Kendall tau of each indicator for surrogates from..to−1 (NaN where undefined). Each surrogate goes
 * through the same rolling indicators and Kendall tau as the observed residual. Cost O((to−from)·n log n).
 * Source: the surrogate test of rolling-indicator trends, Dakos et al. (2008), PNAS 105, 14308–14312 (from memory).
 */
export function surrogateTaus(job: SurrogateJob, from: number, to: number): Record<string, Float64Array> {
  const out: Record<string, Float64Array> = {};
  for (const name of job.indicators) out[name] = new Float64Array(to - from);
  for (let i = from; i < to; i++) {
    const series = makeSurrogate(job, i);
    const ind = rollingIndicators(series, job.w, job.indicators, { rawMean: job.rawMean ?? undefined, dt: job.dt, skip: job.skip, stride: job.stride });
    const trends = indicatorTrends(ind);
    for (const name of job.indicators) out[name][i - from] = trends[name]!.tau;
  }
  return out;
}

/**
 * Monte Carlo surrogate p-value in a direction, over the N surrogates with a defined τ: rising
 * p = (1 + #{τ_s ≥ τ})/(N + 1); falling p = (1 + #{τ_s ≤ τ})/(N + 1); two-sided p = (1 + #{|τ_s| ≥ |τ|})/(N + 1)
 * (null when τ is undefined or no surrogate has one). O(N). Source: Davison & Hinkley (1997), Bootstrap
 * Methods and their Application, Sec. 4.2.1 (Monte Carlo p-value) (from memory).
 */
export function surrogatePValue(observed: number, taus: Float64Array, direction: TrendDirection = 'rising'): { p: number | null; count: number } {
  const o = orientedTau(observed, direction);
  let count = 0,
    beyond = 0;
  for (const t of taus) {
    if (!Number.isFinite(t)) continue;
    count++;
    if (orientedTau(t, direction) >= o) beyond++;
  }
  if (!Number.isFinite(observed) || count === 0) return { p: null, count };
  return { p: (1 + beyond) / (count + 1), count };
}
