import { momentIndicator } from './definition';

/**
 * Bimodality coefficient in its moment form, b = (g1² + 1)/(g2 + 3) with the moment skewness g1 and excess
 * kurtosis g2 of the window (so g2 + 3 = (M4/w)/(M2/w)²); NaN for a flat window. Above 5/9 (the value of a uniform
 * distribution) suggests two states. O(1).
 */
export const bimodality = momentIndicator({
  name: 'bimodality',
  direction: 'rising',
  formula: 'b = (g1² + 1)/(g2 + 3), g1, g2 the moment skewness and excess kurtosis; b > 5/9 suggests two states',
  cost: 'O(1) per window from sliding sums',
  source: 'Pfister et al. (2013), Front. Psychol. 4, 700 (moment form); SAS/STAT documentation, PROC CLUSTER (from memory)',
  byDefault: false,
  fromMoments: ({ w, m2, m3, m4 }) => {
    if (!(m2 > 0)) return Number.NaN;
    const q = m2 / w;
    const g1 = m3 / w / (q * Math.sqrt(q));
    return (g1 * g1 + 1) / (m4 / w / (q * q));
  },
});
