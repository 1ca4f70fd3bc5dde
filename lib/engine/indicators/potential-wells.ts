import { polynomialFit } from '../polyfit';
import { windowIndicator } from './definition';

/** Grid points of the binned density and of the potential fit. */
const GRID = 256;
/** Grid points where the fitted potential is searched for minima. */
const SEARCH = 1001;
/** Highest half-degree tried: potentials up to degree 8, so up to four wells. */
const MAX_HALF_DEGREE = 4;
/** Density below this share of its peak is left out of the fit (there −ln f is dominated by the sample's edges). */
const DENSITY_FLOOR = 0.01;

/**
 * Density of the window standardised by (mean, sd) on GRID equally spaced points spanning its range [lo, hi]: linear binning of the
 * points onto the grid, then a Gaussian kernel with Silverman's bandwidth h = 1.06·w^{−1/5} (for unit variance)
 * summed over the bins, f(t_m) = Σ_k c_k φ((t_m − t_k)/h)/(w h). O(w + GRID²). Sources: Silverman (1986), Density
 * Estimation for Statistics and Data Analysis, eq. 3.28 (bandwidth); Wand (1994), J. Comput. Graph. Stat. 3,
 * 433–445 (linear binning) (both from memory).
 */
function binnedDensity(r: Float64Array, mean: number, sd: number, lo: number, hi: number): { grid: Float64Array; density: Float64Array } {
  const w = r.length;
  const step = (hi - lo) / (GRID - 1);
  const counts = new Float64Array(GRID);
  for (let j = 0; j < w; j++) {
    const pos = ((r[j] - mean) / sd - lo) / step;
    const k = Math.min(GRID - 2, Math.floor(pos));
    const frac = pos - k;
    counts[k] += 1 - frac;
    counts[k + 1] += frac;
  }
  const h = 1.06 * Math.pow(w, -0.2);
  const grid = Float64Array.from({ length: GRID }, (_, m) => lo + m * step);
  const density = new Float64Array(GRID);
  const norm = 1 / (w * h * Math.sqrt(2 * Math.PI));
  // The kernel between bins depends only on their distance |m − k|.
  const kernel = Float64Array.from({ length: GRID }, (_, d) => Math.exp(-0.5 * ((d * step) / h) ** 2));
  for (let m = 0; m < GRID; m++) {
    let sum = 0;
    for (let k = 0; k < GRID; k++) sum += counts[k] * kernel[Math.abs(m - k)];
    density[m] = sum * norm;
  }
  return { grid, density };
}

/**
 * Number of wells of the fitted potential of a window (flickering between states shows as more than one): the window
 * standardised to mean 0 and sd 1; its density f by binnedDensity; the potential U = −ln f (up to the noise factor
 * σ²/2, which does not move minima) where f is at least 1% of its peak; polynomials of degree 2L, L = 4, 3, 2, 1,
 * fitted by least squares on the grid mapped to [−1, 1], keeping the highest L whose leading coefficient is positive
 * (a potential that confines); the value is the number of local minima of that polynomial over the window's range.
 * NaN for a flat window or fewer than 16 points. Cost O(w) per window (plus a fixed 256² kernel sum).
 * Source: potential analysis, Livina et al. (2010), Clim. Past 6, 77–82 (from memory: polynomial potentials of even
 * degree, the highest with a positive leading coefficient); the density floor and grids are ours.
 */
export const potentialWells = windowIndicator({
  name: 'potential-wells',
  direction: 'rising',
  formula:
    'minima of the even-degree (≤ 8) polynomial fitted to U = −ln f, f the kernel density of the standardised window; highest degree with a positive leading coefficient',
  cost: 'O(w) per evaluated window',
  source: 'Livina et al. (2010), Clim. Past 6, 77–82 (potential analysis, from memory); Silverman (1986), eq. 3.28 (bandwidth)',
  byDefault: false,
  companions: [],
  evaluate(r) {
    const w = r.length;
    if (w < 16) return { value: Number.NaN };
    let mean = 0;
    for (let j = 0; j < w; j++) mean += r[j];
    mean /= w;
    let ss = 0;
    for (let j = 0; j < w; j++) ss += (r[j] - mean) ** 2;
    const sd = Math.sqrt(ss / (w - 1));
    if (!(sd > 0)) return { value: Number.NaN };
    let min = Infinity,
      max = -Infinity;
    for (let j = 0; j < w; j++) {
      if (r[j] < min) min = r[j];
      if (r[j] > max) max = r[j];
    }
    const lo = (min - mean) / sd;
    const hi = (max - mean) / sd;
    const { grid, density } = binnedDensity(r, mean, sd, lo, hi);
    let peak = 0;
    for (const f of density) peak = Math.max(peak, f);
    const x: number[] = [];
    const y: number[] = [];
    const mid = (hi + lo) / 2;
    const half = (hi - lo) / 2;
    for (let m = 0; m < GRID; m++) {
      if (density[m] < DENSITY_FLOOR * peak) continue;
      x.push((grid[m] - mid) / half);
      y.push(-Math.log(density[m]));
    }
    for (let L = MAX_HALF_DEGREE; L >= 1; L--) {
      if (x.length <= 2 * L + 1) continue;
      const coef = polynomialFit(x, y, 2 * L);
      if (!(coef[2 * L] > 0)) continue;
      return { value: countMinima(coef) };
    }
    return { value: Number.NaN };
  },
});

/** Interior local minima of Σ a_i v^i over SEARCH points of [−1, 1] (Horner), a minimum being lower than both neighbours. O(SEARCH·degree). */
function countMinima(coef: Float64Array): number {
  const values = new Float64Array(SEARCH);
  for (let s = 0; s < SEARCH; s++) {
    const v = -1 + (2 * s) / (SEARCH - 1);
    let p = 0;
    for (let i = coef.length - 1; i >= 0; i--) p = p * v + coef[i];
    values[s] = p;
  }
  let minima = 0;
  for (let s = 1; s < SEARCH - 1; s++) if (values[s] < values[s - 1] && values[s] <= values[s + 1]) minima++;
  // A monotone stretch at an edge of the range still confines there: count the lower edge as a well.
  if (minima === 0) minima = 1;
  return minima;
}
