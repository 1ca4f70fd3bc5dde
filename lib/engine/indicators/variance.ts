import { momentIndicator } from './definition';

/** Sample variance M2/(w − 1). O(1). Source: NIST StRD univariate summary statistics. */
export const variance = momentIndicator({
  name: 'variance',
  direction: 'rising',
  formula: 's² = Σ(r − r̄)²/(w − 1)',
  cost: 'O(1) per window from sliding sums',
  source: 'NIST StRD univariate summary statistics; rising before a fold: Scheffer et al. (2009), Nature 461, 53–59 (from memory)',
  byDefault: true,
  fromMoments: ({ w, m2 }) => m2 / (w - 1),
});
