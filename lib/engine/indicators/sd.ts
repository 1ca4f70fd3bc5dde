import { momentIndicator } from './definition';

/** Standard deviation √(M2/(w − 1)). O(1). Source: NIST StRD univariate summary statistics. */
export const sd = momentIndicator({
  name: 'sd',
  direction: 'rising',
  formula: 's = √(Σ(r − r̄)²/(w − 1))',
  cost: 'O(1) per window from sliding sums',
  source: 'NIST StRD univariate summary statistics',
  byDefault: true,
  trendOf: { name: 'variance', sign: 1 },
  fromMoments: ({ w, m2 }) => Math.sqrt(m2 / (w - 1)),
});
