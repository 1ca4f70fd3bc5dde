import { momentIndicator } from './definition';

/** Excess moment kurtosis g2 = (M4/w)/(M2/w)² − 3; NaN for a flat window. O(1). Either direction. */
export const kurtosis = momentIndicator({
  name: 'kurtosis',
  direction: 'two-sided',
  formula: 'g2 = (Σ(r − r̄)⁴/w)/(Σ(r − r̄)²/w)² − 3',
  cost: 'O(1) per window from sliding sums',
  source: 'Joanes & Gill (1998), The Statistician 47, 183–189 (g2); direction: Guttal & Jayaprakash (2008), Ecol. Lett. 11, 450–460 (from memory)',
  byDefault: true,
  fromMoments: ({ w, m2, m4 }) => {
    if (!(m2 > 0)) return Number.NaN;
    const q = m2 / w;
    return m4 / w / (q * q) - 3;
  },
});
