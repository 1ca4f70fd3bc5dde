import { momentIndicator } from './definition';

/**
 * Moment skewness g1 = (M3/w)/(M2/w)^{3/2}; NaN for a flat window. O(1). Either direction: it depends on which
 * side of the state the other basin lies.
 */
export const skewness = momentIndicator({
  name: 'skewness',
  direction: 'two-sided',
  formula: 'g1 = (Σ(r − r̄)³/w)/(Σ(r − r̄)²/w)^{3/2}',
  cost: 'O(1) per window from sliding sums',
  source: 'Joanes & Gill (1998), The Statistician 47, 183–189 (g1); direction: Guttal & Jayaprakash (2008), Ecol. Lett. 11, 450–460 (from memory)',
  byDefault: true,
  fromMoments: ({ w, m2, m3 }) => {
    if (!(m2 > 0)) return Number.NaN;
    const q = m2 / w;
    return m3 / w / (q * Math.sqrt(q));
  },
});
