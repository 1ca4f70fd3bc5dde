import { accurateMean } from '../detrend';
import { realDft } from '../fft';
import { windowIndicator } from './definition';

/**
 * Spectral reddening: with the periodogram P_k = |Σ_j (r_j − r̄) e^{−2πijk/w}|², K = ⌊w/2⌋ and m = max(1, ⌊K/10⌋),
 * the ratio of the mean of P_1..P_m to the mean of P_{K−m+1}..P_K. Rises as power shifts to low frequencies.
 * NaN for a flat window. Cost O(w log w) per window (one real DFT: half a complex one of length w/2, by Bluestein's method for lengths that are not powers of two).
 */
export const spectralRatio = windowIndicator({
  name: 'spectral-ratio',
  direction: 'rising',
  formula: 'mean(P_1..P_m)/mean(P_{K−m+1}..P_K), P_k the periodogram of r − r̄, K = ⌊w/2⌋, m = max(1, ⌊K/10⌋)',
  cost: 'O(w log w) per evaluated window',
  source: 'Kleinen, Held & Petschel-Held (2003), Ocean Dynamics 53, 53–63; Dakos et al. (2012), PLoS ONE 7, e41010',
  byDefault: false,
  companions: [],
  evaluate(r) {
    const w = r.length;
    const half = w >> 1;
    const m = Math.max(1, Math.floor(half / 10));
    const mean = accurateMean(r);
    const centred = new Float64Array(w);
    for (let j = 0; j < w; j++) centred[j] = r[j] - mean;
    const { re, im } = realDft(centred);
    let low = 0,
      high = 0;
    for (let k = 1; k <= m; k++) low += re[k] * re[k] + im[k] * im[k];
    for (let k = half - m + 1; k <= half; k++) high += re[k] * re[k] + im[k] * im[k];
    return { value: low / high };
  },
});
