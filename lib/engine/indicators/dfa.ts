import { accurateMean, linearFit } from '../detrend';
import { windowIndicator } from './definition';

/**
 * Detrended fluctuation exponent: profile Y_j = Σ_{i≤j}(r_i − r̄); for box sizes s = 4, 8, 16, … ≤ ⌊w/4⌋, cut Y
 * into the ⌊w/s⌋ full non-overlapping boxes from the window's start, remove each box's least-squares line, and
 * take F(s) = √(mean squared remainder over all full boxes); the value is the OLS slope of ln F(s) on ln s.
 * NaN for w < 32 (fewer than two box sizes) or a flat window. Cost O(w log w) per window (O(w) per box size).
 */
export const dfa = windowIndicator({
  name: 'dfa',
  direction: 'rising',
  formula:
    'slope of ln F(s) on ln s, F(s)² the mean squared remainder of the profile Y_j = Σ_{i≤j}(r_i − r̄) after a line is removed in each full box of s = 4, 8, 16, … ≤ ⌊w/4⌋ points',
  cost: 'O(w log w) per evaluated window',
  source: 'Peng et al. (1994), Phys. Rev. E 49, 1685–1689; Livina & Lenton (2007), Geophys. Res. Lett. 34, L03712',
  byDefault: false,
  companions: [],
  evaluate(r) {
    const w = r.length;
    const mean = accurateMean(r);
    const profile = new Float64Array(w);
    let sum = 0;
    for (let j = 0; j < w; j++) profile[j] = sum += r[j] - mean;
    const logS: number[] = [];
    const logF: number[] = [];
    for (let s = 4; s <= Math.floor(w / 4); s *= 2) {
      // Positions within a box are 0..s−1: x̄ = (s − 1)/2 and Σ(x − x̄)² = s(s² − 1)/12 in closed form.
      const xBar = (s - 1) / 2;
      const sxx = (s * (s * s - 1)) / 12;
      const boxes = Math.floor(w / s);
      let squares = 0;
      for (let b = 0; b < boxes; b++) {
        const from = b * s;
        // Sums about the box's first value, so the profile's level costs no digits; one pass for Σy and Σ(k − x̄)y.
        const origin = profile[from];
        let sy = 0,
          sxy = 0;
        for (let k = 0; k < s; k++) {
          const y = profile[from + k] - origin;
          sy += y;
          sxy += (k - xBar) * y;
        }
        const yBar = sy / s;
        const slope = sxy / sxx;
        for (let k = 0; k < s; k++) {
          const e = profile[from + k] - origin - yBar - slope * (k - xBar);
          squares += e * e;
        }
      }
      logS.push(Math.log(s));
      logF.push(0.5 * Math.log(squares / (boxes * s)));
    }
    if (logS.length < 2) return { value: Number.NaN };
    return { value: linearFit(logS, logF).slope };
  },
});
