import { sampleStandardDeviation } from 'simple-statistics';
import { detrend } from './detrend';
import { normalPInDirection, type TrendDirection } from './direction';
import { generalizedEigenvalues, symmetricEigenvalues } from './eigen';
import { AnalysisInputError } from './errors';
import { dft } from './fft';
import { extentPoints } from './extent';
import { indicatorTrend } from './kendall';
import { RandomStream } from './random';
import { evaluationStride, windowPoints } from './rolling';
import type { AnalysisSettings } from './settings';
import type { TimeKind } from './time-kind';
import { surrogatePValue } from './surrogates';

/**
 * Site-level indicators over k series of one site on a common grid, each detrended with the same settings, on the
 * residual matrix R (w rows, k columns) of a window: Σ its covariance and Σ_Δ that of its first differences (both
 * with denominator count − 1). All rise as the site loses resilience (sensors move together, slowly).
 */
export const SITE_INDICATORS = [
  {
    name: 'pc1-variance',
    direction: 'rising',
    formula: 'largest eigenvalue of Σ',
    source: 'Dakos et al. (2012), PLoS ONE 7, e41010 (principal components, from memory); Weinans et al. (2019), J. R. Soc. Interface 16, 20180734',
  },
  {
    name: 'pc1-share',
    direction: 'rising',
    formula: 'largest eigenvalue of Σ over its trace',
    source: 'Weinans et al. (2019), J. R. Soc. Interface 16, 20180734',
  },
  {
    name: 'maf-ac1',
    direction: 'rising',
    formula: '1 − λ/2, λ the smallest generalised eigenvalue of Σ_Δ v = λ Σ v (lag-1 autocorrelation of the first maximum-autocorrelation factor)',
    source: 'Weinans et al. (2019), J. R. Soc. Interface 16, 20180734; Switzer & Green (1984), min/max autocorrelation factors (from memory)',
  },
] as const satisfies readonly { name: string; direction: TrendDirection; formula: string; source: string }[];

export type SiteIndicatorName = (typeof SITE_INDICATORS)[number]['name'];

/** Covariance (denominator rows − 1) of columns of rows from..to−1, or of their first differences. O(rows·k²). */
function covariance(columns: readonly Float64Array[], from: number, to: number, differences: boolean): Float64Array {
  const k = columns.length;
  const rows = differences ? to - from - 1 : to - from;
  const value = (c: number, i: number) => (differences ? columns[c][from + i + 1] - columns[c][from + i] : columns[c][from + i]);
  const means = new Float64Array(k);
  for (let c = 0; c < k; c++) {
    let s = 0;
    for (let i = 0; i < rows; i++) s += value(c, i);
    means[c] = s / rows;
  }
  const out = new Float64Array(k * k);
  for (let a = 0; a < k; a++) {
    for (let b = a; b < k; b++) {
      let s = 0;
      for (let i = 0; i < rows; i++) s += (value(a, i) - means[a]) * (value(b, i) - means[b]);
      out[a * k + b] = out[b * k + a] = s / (rows - 1);
    }
  }
  return out;
}

/** The three site indicators of the window of w rows ending at row `end`. O(w·k² + k³). */
export function siteWindow(columns: readonly Float64Array[], end: number, w: number): Record<SiteIndicatorName, number> {
  const k = columns.length;
  const sigma = covariance(columns, end - w + 1, end + 1, false);
  const eigen = symmetricEigenvalues(sigma, k);
  let trace = 0;
  for (let i = 0; i < k; i++) trace += sigma[i * k + i];
  const largest = eigen[k - 1];
  const smallest = generalizedEigenvalues(covariance(columns, end - w + 1, end + 1, true), sigma, k)[0];
  const finite = (v: number) => (Number.isFinite(v) ? v : Number.NaN);
  return { 'pc1-variance': finite(largest), 'pc1-share': finite(largest / trace), 'maf-ac1': finite(1 - smallest / 2) };
}

/**
 * Rolling site indicators at every `stride`-th window counted back from the latest (NaN between), as the per-window
 * univariate indicators are. O(n/stride · (w·k² + k³)).
 */
export function rollingSiteIndicators(columns: readonly Float64Array[], w: number, stride: number): Record<SiteIndicatorName, Float64Array> {
  const n = columns[0].length;
  const out = Object.fromEntries(SITE_INDICATORS.map((d) => [d.name, new Float64Array(n).fill(Number.NaN)])) as Record<SiteIndicatorName, Float64Array>;
  for (let end = n - 1; end >= w - 1; end -= stride) {
    const v = siteWindow(columns, end, w);
    for (const d of SITE_INDICATORS) out[d.name][end] = v[d.name];
  }
  return out;
}

/**
 * Multivariate phase-randomised surrogate: each column's DFT keeps its amplitudes, and every column gets the same
 * random phase added at each frequency (θ_f uniform on [0, 2π) for 0 < f < n/2, conjugate above, mean and Nyquist
 * kept), so every periodogram and every cross-spectrum — hence the auto- and cross-correlations — are kept.
 * Cost O(k·n log n). Source: Prichard & Theiler (1994), Phys. Rev. Lett. 73, 951–954.
 */
export function coherentPhaseSurrogate(spectra: readonly { re: Float64Array; im: Float64Array }[], seed: number, index: number): Float64Array[] {
  const rng = new RandomStream(seed, index);
  const n = spectra[0].re.length;
  const cos = new Float64Array(n);
  const sin = new Float64Array(n);
  for (let f = 1; 2 * f < n; f++) {
    const theta = 2 * Math.PI * rng.uniform();
    cos[f] = Math.cos(theta);
    sin[f] = Math.sin(theta);
  }
  return spectra.map(({ re, im }) => {
    const sr = new Float64Array(n);
    const si = new Float64Array(n);
    sr[0] = re[0];
    for (let f = 1; 2 * f < n; f++) {
      sr[f] = re[f] * cos[f] - im[f] * sin[f];
      si[f] = re[f] * sin[f] + im[f] * cos[f];
      sr[n - f] = sr[f];
      si[n - f] = -si[f];
    }
    if (n % 2 === 0) sr[n / 2] = re[n / 2];
    return dft(sr, si, true).re;
  });
}

export interface SiteAnalysisResult {
  n: number;
  windowPoints: number;
  evaluatedEvery: number;
  indicators: Record<SiteIndicatorName, (number | null)[]>;
  kendall: Record<SiteIndicatorName, { tau: number | null; p: number | null; direction: TrendDirection }>;
  /** phase-coherent surrogate p (rising) and the sample sd (n − 1) of the finite surrogate taus, when settings.surrogates > 0 */
  significance: Partial<Record<SiteIndicatorName, { p: number | null; count: number; method: 'phase'; direction: TrendDirection; nullSd: number | null }>>;
}

/** How one column is detrended: its own series' method, bandwidth and moving-average width. */
export type ColumnDetrending = Pick<AnalysisSettings, 'detrend' | 'bandwidth' | 'movingAverageWidth'>;

/**
 * Site-level analysis of k ≥ 2 series observed at every one of the same n regularly spaced instants: each column
 * detrended with its own method and bandwidth (`input.detrending`, one per column, as its series' settings say;
 * the settings' own when absent; a bandwidth as a fraction of the n instants, "<n> points" or, with `timeKind`
 * 'utc-ms', an ISO 8601 duration), the residuals aligned at their ends (a differenced column is one shorter, its
 * first residual belonging to the second instant, so the others drop their first), windows of settings.window, the site indicators evaluated at
 * no more than settings.maxEvaluatedWindows windows, Kendall tau over those (normal p in the rising direction,
 * descriptive), and, with settings.surrogates > 0, the surrogate p against phase-coherent surrogates of the residual
 * matrix. Throws AnalysisInputError for fewer than two series, unequal lengths or a missing value. Cost
 * O(k·n log n + n/stride·(w·k² + k³)) plus N times that for N surrogates.
 */
export function runSiteAnalysis(
  input: { values: readonly Float64Array[]; interval?: number; timeKind?: TimeKind; detrending?: readonly ColumnDetrending[] },
  settings: AnalysisSettings,
): SiteAnalysisResult {
  const { values } = input;
  if (values.length < 2) throw new AnalysisInputError('site-level indicators need at least two series');
  const n = values[0].length;
  values.forEach((v, c) => {
    if (v.length !== n) throw new AnalysisInputError(`series ${c + 1} has ${v.length} points where the first has ${n}: put them on one grid first`);
    const missing = v.findIndex((x) => !Number.isFinite(x));
    if (missing >= 0)
      throw new AnalysisInputError(`series ${c + 1} has no value at point ${missing + 1}; site-level indicators need every series at every instant`);
  });
  if (input.detrending && input.detrending.length !== values.length)
    throw new AnalysisInputError(`${input.detrending.length} detrending choices for ${values.length} series: give one per series`);
  const own = values.map((v, c) => {
    const d = input.detrending?.[c] ?? settings;
    const h = extentPoints(d.bandwidth, n, input.interval ?? Number.NaN, input.timeKind ?? 'numeric');
    return detrend(v, d.detrend, { bandwidthPoints: h, movingAverageWidth: d.movingAverageWidth }).residual;
  });
  const m = Math.min(...own.map((r) => r.length));
  const residuals = own.map((r) => r.subarray(r.length - m));
  const w = windowPoints(settings.window, m);
  const stride = evaluationStride(m - w + 1, settings.maxEvaluatedWindows);
  const observed = rollingSiteIndicators(residuals, w, stride);
  const indicators = {} as SiteAnalysisResult['indicators'];
  const kendall = {} as SiteAnalysisResult['kendall'];
  const taus = {} as Record<SiteIndicatorName, number>;
  for (const d of SITE_INDICATORS) {
    const t = indicatorTrend(observed[d.name]);
    taus[d.name] = t.tau;
    indicators[d.name] = Array.from(observed[d.name], (v) => (Number.isFinite(v) ? v : null));
    const p = normalPInDirection(t.s / Math.sqrt(t.varS), d.direction);
    kendall[d.name] = { tau: Number.isFinite(t.tau) ? t.tau : null, p: Number.isFinite(p) ? p : null, direction: d.direction };
  }
  const significance: SiteAnalysisResult['significance'] = {};
  if (settings.surrogates > 0) {
    const spectra = residuals.map((r) => dft(r, new Float64Array(m)));
    const nullTaus = Object.fromEntries(SITE_INDICATORS.map((d) => [d.name, new Float64Array(settings.surrogates)])) as Record<SiteIndicatorName, Float64Array>;
    for (let s = 0; s < settings.surrogates; s++) {
      const rolled = rollingSiteIndicators(coherentPhaseSurrogate(spectra, settings.seed, s), w, stride);
      for (const d of SITE_INDICATORS) nullTaus[d.name][s] = indicatorTrend(rolled[d.name]).tau;
    }
    for (const d of SITE_INDICATORS) {
      const finite = Array.from(nullTaus[d.name]).filter(Number.isFinite);
      significance[d.name] = {
        ...surrogatePValue(taus[d.name], nullTaus[d.name], d.direction),
        method: 'phase',
        direction: d.direction,
        // the null spread of tau, which a rule's quiet period measures "clearly stronger" evidence in
        nullSd: finite.length >= 2 ? sampleStandardDeviation(finite) : null,
      };
    }
  }
  return { n: m, windowPoints: w, evaluatedEvery: stride, indicators, kendall, significance };
}
