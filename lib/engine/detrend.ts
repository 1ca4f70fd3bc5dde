import { AnalysisInputError } from './errors';
import { inverseRealFft, nextPowerOfTwo, realFft } from './fft';

export const DETREND_METHODS = ['none', 'linear', 'gaussian', 'moving-average', 'difference'] as const;
export type DetrendMethod = (typeof DETREND_METHODS)[number];

export interface Detrended {
  /** Index into the input of the first point kept (1 for `difference`, else 0). */
  offset: number;
  trend: Float64Array;
  residual: Float64Array;
}

/** Mean with one correction pass, x̄ = m + Σ(x − m)/n for the naive mean m. O(n). Source: Higham (2002), Accuracy and Stability of Numerical Algorithms, 2nd ed., Sec. 1.9 / 4 (corrected two-pass). */
export function accurateMean(x: ArrayLike<number>, from = 0, to = x.length): number {
  const n = to - from;
  let s = 0;
  for (let i = from; i < to; i++) s += x[i];
  const m = s / n;
  let c = 0;
  for (let i = from; i < to; i++) c += x[i] - m;
  return m + c / n;
}

/**
 * Ordinary least squares line y ≈ a + b·x with centred sums: b = Σ(x−x̄)(y−ȳ)/Σ(x−x̄)², a = ȳ − b x̄,
 * residual sd = √(Σ e²/(n−2)). O(n). Source: Draper & Smith (1998), Applied Regression Analysis,
 * 3rd ed., Ch. 1; checked against NIST StRD Norris.
 */
export function linearFit(x: ArrayLike<number>, y: ArrayLike<number>): { intercept: number; slope: number; residualSd: number } {
  const n = y.length;
  const mx = accurateMean(x);
  const my = accurateMean(y);
  let sxx = 0;
  let sxy = 0;
  for (let i = 0; i < n; i++) {
    const dx = x[i] - mx;
    sxx += dx * dx;
    sxy += dx * (y[i] - my);
  }
  const slope = sxx > 0 ? sxy / sxx : 0;
  const intercept = my - slope * mx;
  let sse = 0;
  for (let i = 0; i < n; i++) {
    const e = y[i] - my - slope * (x[i] - mx);
    sse += e * e;
  }
  return { intercept, slope, residualSd: n > 2 ? Math.sqrt(sse / (n - 2)) : Number.NaN };
}

/** exp(−d²/2h²) falls below 1e-17 for |d| > GAUSS_REACH·h (√(2 ln 1e17) ≈ 8.85). */
const GAUSS_REACH = 8.86;

/**
 * Nadaraya–Watson smoother with a Gaussian kernel on the index grid:
 * trend_i = Σ_j K_ij x_j / Σ_j K_ij, K_ij = exp(−(i−j)²/(2h²)), over all j = 0..n−1.
 * The numerator is a linear convolution done with real FFTs of a power-of-two length N ≥ n + L, where
 * L = min(n−1, ⌈8.86 h⌉) is where the kernel drops below 1e-17 (so dropping |d| > L changes the trend by
 * < 1e-16 of max|x − x̄|: exact in double precision at any bandwidth). The kernel spectrum comes from
 * the Poisson summation formula, K̂_m = h√(2π) Σ_q exp(−2π²h²(m/N − q)²), when the kernel fits without
 * aliasing, else from an FFT of the sampled kernel. The denominator comes from cumulative kernel sums.
 * The series mean is taken out first (weights sum to one), so large offsets cost no digits.
 * Cost O(n log n). Sources: Nadaraya (1964), Theory Probab. Appl. 9, 141–142; Watson (1964), Sankhyā A 26,
 * 359–372; convolution theorem and Poisson summation, e.g. Bracewell, The Fourier Transform and Its
 * Applications (3rd ed., 2000), Ch. 6 and 10.
 */
export function gaussianSmooth(x: Float64Array, h: number): Float64Array {
  const n = x.length;
  if (!(h > 0)) throw new AnalysisInputError(`bandwidth must be positive (got ${h} points)`);
  const mean = accurateMean(x);
  const out = new Float64Array(n).fill(mean);
  if (n < 2) return out;
  const reach = Math.ceil(GAUSS_REACH * h);
  const L = Math.min(n - 1, reach);
  const size = nextPowerOfTwo(n + L);
  const kernel = new Float64Array(L + 1);
  for (let d = 0; d <= L; d++) kernel[d] = Math.exp(-(d * d) / (2 * h * h));

  const centred = new Float64Array(n);
  let any = false;
  for (let i = 0; i < n; i++) {
    centred[i] = x[i] - mean;
    if (centred[i] !== 0) any = true;
  }
  if (!any) return out;

  const half = size >> 1;
  const X = realFft(centred, size);
  let K: Float64Array;
  if (reach <= L && size - n + 1 >= reach && h >= 1) {
    K = new Float64Array(half + 1);
    const c = h * Math.sqrt(2 * Math.PI);
    const a = 2 * Math.PI * Math.PI * h * h;
    // Terms with a·d² > 745 underflow to zero; q ≠ 0 terms have |q ± f| ≥ 1/2 for f = m/N ∈ [0, 1/2].
    const aliasTerms = a / 4 <= 745;
    for (let m = 0; m <= half; m++) {
      const f = m / size;
      let s = Math.exp(-a * f * f);
      if (aliasTerms) {
        for (let q = 1; ; q++) {
          const t1 = Math.exp(-a * (q - f) * (q - f));
          s += t1 + Math.exp(-a * (q + f) * (q + f));
          if (t1 === 0) break;
        }
      } else if (s === 0) break;
      K[m] = c * s;
    }
  } else {
    const kc = new Float64Array(size);
    kc[0] = kernel[0];
    for (let d = 1; d <= L; d++) kc[d] = kc[size - d] = kernel[d];
    K = realFft(kc, size).re;
  }
  for (let m = 0; m <= half; m++) {
    X.re[m] *= K[m];
    X.im[m] *= K[m];
  }
  const num = inverseRealFft(X.re, X.im, size);

  // den_i = Σ_{d=−min(i,L)}^{min(n−1−i,L)} k_|d| from cumulative sums of positive terms.
  const cum = new Float64Array(L + 1);
  let acc = 0;
  for (let d = 0; d <= L; d++) cum[d] = acc += kernel[d];
  for (let i = 0; i < n; i++) {
    const den = cum[Math.min(i, L)] + cum[Math.min(n - 1 - i, L)] - kernel[0];
    out[i] = mean + num[i] / den;
  }
  return out;
}

/**
 * Centred moving average of odd width m; near the ends the window is cut to the points that exist
 * (the mean of x_j for |i − j| ≤ (m−1)/2 and 0 ≤ j < n). Prefix sums of x − x̄ with Neumaier
 * compensation keep long series exact to rounding. O(n). Source: Chatfield (2004), The Analysis of Time
 * Series, 6th ed., Sec. 2.5.2; Neumaier (1974), ZAMM 54, 39–51.
 */
export function movingAverage(x: Float64Array, width: number): Float64Array {
  const n = x.length;
  if (!Number.isInteger(width) || width < 3 || width % 2 === 0) {
    throw new AnalysisInputError(`moving-average width must be an odd integer of at least 3 (got ${width})`);
  }
  const mean = accurateMean(x);
  const hi = new Float64Array(n + 1);
  const lo = new Float64Array(n + 1);
  let s = 0;
  let c = 0;
  for (let i = 0; i < n; i++) {
    const v = x[i] - mean;
    const t = s + v;
    c += Math.abs(s) >= Math.abs(v) ? s - t + v : v - t + s;
    s = t;
    hi[i + 1] = s;
    lo[i + 1] = c;
  }
  const r = (width - 1) / 2;
  const out = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    const a = Math.max(0, i - r);
    const b = Math.min(n, i + r + 1);
    out[i] = mean + (hi[b] - hi[a] + (lo[b] - lo[a])) / (b - a);
  }
  return out;
}

/**
 * Trend and residual = x − trend for one detrending method.
 * none: trend 0; linear: OLS on the index; gaussian: gaussianSmooth with h = bandwidth·n;
 * moving-average: centred, width in points; difference: residual_i = x_{i+1} − x_i (n−1 points, trend = x_i).
 * Cost O(n), O(n log n) for gaussian. Sources: those of the functions it calls; differencing, Box et al.
 * (2015), Time Series Analysis, Ch. 4 (from memory).
 */
export function detrend(x: Float64Array, method: DetrendMethod, opts: { bandwidthPoints: number; movingAverageWidth: number }): Detrended {
  const n = x.length;
  if (method === 'difference') {
    const trend = x.slice(0, n - 1);
    const residual = new Float64Array(n - 1);
    for (let i = 0; i < n - 1; i++) residual[i] = x[i + 1] - x[i];
    return { offset: 1, trend, residual };
  }
  let trend: Float64Array;
  if (method === 'none') trend = new Float64Array(n);
  else if (method === 'gaussian') trend = gaussianSmooth(x, opts.bandwidthPoints);
  else if (method === 'moving-average') trend = movingAverage(x, opts.movingAverageWidth);
  else {
    const idx = new Float64Array(n);
    for (let i = 0; i < n; i++) idx[i] = i;
    const { intercept, slope } = linearFit(idx, x);
    trend = new Float64Array(n);
    for (let i = 0; i < n; i++) trend[i] = intercept + slope * i;
  }
  const residual = new Float64Array(n);
  for (let i = 0; i < n; i++) residual[i] = x[i] - trend[i];
  return { offset: 0, trend, residual };
}
