import { AnalysisInputError } from './errors';
import { inverseRealFft, nextPowerOfTwo, realFft } from './fft';

export const DETREND_METHODS = ['none', 'linear', 'gaussian', 'local-linear', 'moving-average', 'difference'] as const;
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
 * residual sd = √(Σ e²/(n−2)); the centred sums Sxx, Sxy, Syy and the residual sum of squares come with it
 * (standard error of b = residual sd/√Sxx; R² = Sxy²/(Sxx·Syy)). O(n). Source: Draper & Smith (1998), Applied
 * Regression Analysis, 3rd ed., Ch. 1; checked against NIST StRD Norris.
 */
export function linearFit(
  x: ArrayLike<number>,
  y: ArrayLike<number>,
): { intercept: number; slope: number; residualSd: number; sxx: number; sxy: number; syy: number; sse: number } {
  const n = y.length;
  const mx = accurateMean(x);
  const my = accurateMean(y);
  let sxx = 0;
  let sxy = 0;
  let syy = 0;
  for (let i = 0; i < n; i++) {
    const dx = x[i] - mx;
    const dy = y[i] - my;
    sxx += dx * dx;
    sxy += dx * dy;
    syy += dy * dy;
  }
  const slope = sxx > 0 ? sxy / sxx : 0;
  const intercept = my - slope * mx;
  let sse = 0;
  for (let i = 0; i < n; i++) {
    const e = y[i] - my - slope * (x[i] - mx);
    sse += e * e;
  }
  return { intercept, slope, residualSd: n > 2 ? Math.sqrt(sse / (n - 2)) : Number.NaN, sxx, sxy, syy, sse };
}

/** exp(−d²/2h²) falls below 1e-17 for |d| > GAUSS_REACH·h (√(2 ln 1e17) ≈ 8.85). */
export const GAUSS_REACH = 8.86;

/**
 * The Gaussian kernel k0[d] = exp(−d²/2h²) and k1[d] = d·k0[d] for d = 0..L, with the cumulative sums
 * s0[d] = Σ_{e≤d} k0[e], s1[d] = Σ e·k0[e], s2[d] = Σ e²·k0[e] that give the kernel moments S0, S1, S2 of any window
 * cut by the ends of a record. Shared by the two-sided smoothers here and the one-sided ones of backtests. O(L).
 */
export function gaussianKernelSums(h: number, L: number): { k0: Float64Array; k1: Float64Array; s0: Float64Array; s1: Float64Array; s2: Float64Array } {
  const k0 = new Float64Array(L + 1);
  const k1 = new Float64Array(L + 1);
  const s0 = new Float64Array(L + 1);
  const s1 = new Float64Array(L + 1);
  const s2 = new Float64Array(L + 1);
  let a0 = 0,
    a1 = 0,
    a2 = 0;
  for (let d = 0; d <= L; d++) {
    k0[d] = Math.exp(-(d * d) / (2 * h * h));
    k1[d] = d * k0[d];
    s0[d] = a0 += k0[d];
    s1[d] = a1 += k1[d];
    s2[d] = a2 += d * k1[d];
  }
  return { k0, k1, s0, s1, s2 };
}

/** x − mean, or null when every value equals the mean (a smoother then returns the mean exactly). O(n). */
function centredOrNull(x: Float64Array, mean: number): Float64Array | null {
  const centred = new Float64Array(x.length);
  let any = false;
  for (let i = 0; i < x.length; i++) {
    centred[i] = x[i] - mean;
    if (centred[i] !== 0) any = true;
  }
  return any ? centred : null;
}

/**
 * Nadaraya–Watson smoother with a Gaussian kernel on the index grid:
 * trend_i = Σ_j K_ij x_j / Σ_j K_ij, K_ij = exp(−(i−j)²/(2h²)), over all j = 0..n−1.
 * The numerator is a linear convolution done with real FFTs of a power-of-two length N ≥ n + L, where
 * L = min(n−1, ⌈8.86 h⌉) is where the kernel drops below 1e-17 (so dropping |d| > L changes the trend by
 * < 1e-16 of max|x − x̄|: exact in double precision at any bandwidth). The kernel spectrum comes from
 * gaussianSpectra. The denominator comes from cumulative kernel sums.
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
  const { k0: kernel, s0: cum } = gaussianKernelSums(h, L);

  const centred = centredOrNull(x, mean);
  if (!centred) return out;

  const X = realFft(centred, size);
  const { even: K } = gaussianSpectra(h, n, L, size, false);
  for (let m = 0; m < K.length; m++) {
    X.re[m] *= K[m];
    X.im[m] *= K[m];
  }
  const num = inverseRealFft(X.re, X.im, size);

  // den_i = Σ_{d=−min(i,L)}^{min(n−1−i,L)} k_|d| from cumulative sums of positive terms.
  for (let i = 0; i < n; i++) {
    const den = cum[Math.min(i, L)] + cum[Math.min(n - 1 - i, L)] - kernel[0];
    out[i] = mean + num[i] / den;
  }
  return out;
}

/**
 * Half spectra (m = 0..N/2) of the Gaussian kernel K(d) = exp(−d²/(2h²)) and, when `withSlope`, of d·K(d), laid
 * circularly on N points (d = −L..L), as used for linear convolution of n points. When the kernel fits without
 * aliasing (L = ⌈8.86 h⌉ < n and N − n + 1 ≥ L, h ≥ 1) they come from the Poisson summation formula,
 * K̂_m = h√(2π) Σ_q exp(−2π²h²(f − q)²) and (d·K)^_m = −i·2πh³√(2π) Σ_q (f − q) exp(−2π²h²(f − q)²), f = m/N (the
 * second is purely imaginary: `slope` holds its imaginary part); otherwise from FFTs of the sampled kernels.
 * Cost O(N) (Poisson) or O(N log N). Sources: Poisson summation and the Fourier pair of the Gaussian and of
 * x·exp(−x²/2h²) (derivative theorem), Bracewell, The Fourier Transform and Its Applications (3rd ed., 2000), Ch. 6 and 10.
 */
function gaussianSpectra(h: number, n: number, L: number, size: number, withSlope: boolean): { even: Float64Array; slope: Float64Array | null } {
  const half = size >> 1;
  const reach = Math.ceil(GAUSS_REACH * h);
  if (!(reach <= L && size - n + 1 >= reach && h >= 1)) {
    const even = new Float64Array(size);
    const odd = withSlope ? new Float64Array(size) : null;
    for (let d = 0; d <= L; d++) {
      const k = Math.exp(-(d * d) / (2 * h * h));
      even[d] = k;
      if (d > 0) even[size - d] = k;
      if (odd && d > 0) {
        odd[d] = d * k;
        odd[size - d] = -d * k;
      }
    }
    return { even: realFft(even, size).re, slope: odd ? realFft(odd, size).im : null };
  }
  const even = new Float64Array(half + 1);
  const slope = withSlope ? new Float64Array(half + 1) : null;
  const c = h * Math.sqrt(2 * Math.PI);
  const cs = -2 * Math.PI * h * h * c;
  const a = 2 * Math.PI * Math.PI * h * h;
  // Terms with a·d² > 745 underflow to zero; q ≠ 0 terms have |q ± f| ≥ 1/2 for f = m/N ∈ [0, 1/2].
  const aliasTerms = a / 4 <= 745;
  for (let m = 0; m <= half; m++) {
    const f = m / size;
    const e0 = Math.exp(-a * f * f);
    let s = e0;
    let t = f * e0;
    if (aliasTerms) {
      for (let q = 1; ; q++) {
        const lo = Math.exp(-a * (q - f) * (q - f));
        const hi = Math.exp(-a * (q + f) * (q + f));
        s += lo + hi;
        t += (f - q) * lo + (f + q) * hi;
        if (lo === 0) break;
      }
    } else if (s === 0) break;
    even[m] = c * s;
    if (slope) slope[m] = cs * t;
  }
  return { even, slope };
}

/**
 * Local-linear smoother with a Gaussian kernel on the index grid (Fan & Gijbels 1996): the trend at i is
 * the intercept of the weighted least-squares line through (j − i, x_j) with weights K(j − i) = exp(−(j−i)²/(2h²)):
 * trend_i = (S2 T0 − S1 T1)/(S0 S2 − S1²), S_k = Σ_j K(j−i)(j−i)^k, T_k = Σ_j K(j−i)(j−i)^k x_j, over j = 0..n−1.
 * Unlike Nadaraya–Watson its bias at the ends of the record is of the same order as inside (it follows a
 * trend that bends at the end instead of flattening it). T0 and T1 are linear convolutions of x − x̄ with
 * K(d) and d·K(d), done with real FFTs of a power-of-two length ≥ n + L, L = min(n−1, ⌈8.86 h⌉) (terms beyond
 * are below 1e-17 of the largest), kernel spectra from gaussianSpectra; S0, S1, S2 come from cumulative sums of K(d), d·K(d), d²·K(d). Where the
 * fit is degenerate (h so small that S0 S2 − S1² is not positive) the Nadaraya–Watson value T0/S0 is used.
 * Cost O(n log n). Source: Fan & Gijbels (1996), Local Polynomial Modelling and Its Applications, Ch. 3,
 * eq. (3.5) (from memory); checked against a direct O(n²) evaluation and numpy weighted least squares.
 */
export function localLinearSmooth(x: Float64Array, h: number): Float64Array {
  const n = x.length;
  if (!(h > 0)) throw new AnalysisInputError(`bandwidth must be positive (got ${h} points)`);
  const mean = accurateMean(x);
  const out = new Float64Array(n).fill(mean);
  if (n < 2) return out;
  const L = Math.min(n - 1, Math.ceil(GAUSS_REACH * h));
  const size = nextPowerOfTwo(n + L);
  const { k0, s0: c0, s1: c1, s2: c2 } = gaussianKernelSums(h, L);
  const centred = centredOrNull(x, mean);
  if (!centred) return out;
  const X = realFft(centred, size);
  const { even, slope } = gaussianSpectra(h, n, L, size, true);
  const re0 = new Float64Array(even.length);
  const im0 = new Float64Array(even.length);
  const re1 = new Float64Array(even.length);
  const im1 = new Float64Array(even.length);
  for (let m = 0; m < even.length; m++) {
    re0[m] = X.re[m] * even[m];
    im0[m] = X.im[m] * even[m];
    // X·(i·slope)
    re1[m] = -X.im[m] * slope![m];
    im1[m] = X.re[m] * slope![m];
  }
  const t0 = inverseRealFft(re0, im0, size);
  // The circular convolution gives Σ_j x_j g(i − j); T1 needs Σ_j x_j (j − i) K(j − i) = −that for odd g.
  const t1 = inverseRealFft(re1, im1, size);
  for (let i = 0; i < n; i++) {
    const a = Math.min(i, L);
    const b = Math.min(n - 1 - i, L);
    const s0 = c0[a] + c0[b] - k0[0];
    const s1 = c1[b] - c1[a];
    const s2 = c2[a] + c2[b];
    const det = s0 * s2 - s1 * s1;
    out[i] = mean + (det > 0 ? (s2 * t0[i] + s1 * t1[i]) / det : t0[i] / s0);
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
 * Least-squares line on the index, with residuals formed from centred quantities: with y_i = x_i − x_0,
 * residual_i = (y_i − ȳ) − b(i − ī), trend_i = x_i − residual_i, b = Σ(i−ī)(y_i−ȳ)/Σ(i−ī)². At an offset such as
 * 1e7, x_i − x_0 is exact (Sterbenz lemma) and ȳ is small, so the residuals keep the digits that x̄ itself,
 * rounded to the offset's ulp, or x_i − (a + b i) would lose. O(n). Sources: Draper & Smith (1998), Ch. 1
 * (centred form); Higham (2002), Accuracy and Stability of Numerical Algorithms, Thm 2.5 (Sterbenz lemma).
 */
export function linearDetrend(x: Float64Array): Detrended {
  const n = x.length;
  const idx = new Float64Array(n);
  const y = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    idx[i] = i;
    y[i] = x[i] - x[0];
  }
  const { slope } = linearFit(idx, y);
  const my = accurateMean(y);
  const mi = (n - 1) / 2;
  const trend = new Float64Array(n);
  const residual = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    residual[i] = y[i] - my - slope * (i - mi);
    trend[i] = x[i] - residual[i];
  }
  return { offset: 0, trend, residual };
}

/**
 * Trend and residual = x − trend for one detrending method.
 * none: trend 0; linear: OLS on the index (linearDetrend); gaussian: gaussianSmooth, local-linear: localLinearSmooth, with h = bandwidthPoints;
 * moving-average: centred, width in points; difference: residual_i = x_{i+1} − x_i (n−1 points, trend = x_i).
 * Cost O(n), O(n log n) for gaussian and local-linear. Sources: those of the functions it calls; differencing, Box et al.
 * (2015), Time Series Analysis, Ch. 4 (from memory).
 */
export function detrend(x: Float64Array, method: DetrendMethod, opts: { bandwidthPoints: number; movingAverageWidth: number }): Detrended {
  const n = x.length;
  if (method === 'difference') return { offset: 1, trend: x.slice(0, n - 1), residual: residualAbout(x, x, method) };
  if (method === 'linear') return linearDetrend(x);
  let trend: Float64Array;
  if (method === 'none') trend = new Float64Array(n);
  else if (method === 'gaussian') trend = gaussianSmooth(x, opts.bandwidthPoints);
  else if (method === 'local-linear') trend = localLinearSmooth(x, opts.bandwidthPoints);
  else trend = movingAverage(x, opts.movingAverageWidth);
  return { offset: 0, trend, residual: residualAbout(x, trend, method) };
}

/**
 * The residuals `detrend` forms from x and its trend, the same doubles: x_i − trend_i, or x_{i+1} − x_i for
 * `difference` (the trend unused). Not for `linear`, whose residuals come from centred quantities (linearDetrend).
 * Lets an incremental update keep only the trend (lib/engine/update.ts). O(n).
 */
export function residualAbout(x: Float64Array, trend: Float64Array, method: DetrendMethod): Float64Array {
  if (method === 'linear') throw new RangeError('linear residuals are not x − trend; see linearDetrend');
  if (method === 'difference') {
    const residual = new Float64Array(x.length - 1);
    for (let i = 0; i < x.length - 1; i++) residual[i] = x[i + 1] - x[i];
    return residual;
  }
  const residual = new Float64Array(x.length);
  for (let i = 0; i < x.length; i++) residual[i] = x[i] - trend[i];
  return residual;
}
