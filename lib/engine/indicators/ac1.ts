import { momentIndicator } from './definition';

/** Lag-1 autocorrelation r(1) = lag/M2 (NIST StRD estimator); NaN for a flat window. O(1). */
export const ac1 = momentIndicator({
  name: 'ac1',
  direction: 'rising',
  formula: 'r(1) = Σ_{j<w}(r_j − r̄)(r_{j+1} − r̄)/Σ(r − r̄)²',
  cost: 'O(1) per window from sliding sums',
  source: 'NIST StRD univariate lag-1 autocorrelation; rising before a fold: Scheffer et al. (2009), Nature 461, 53–59 (from memory)',
  byDefault: true,
  fromMoments: ({ m2, lag }) => (m2 > 0 ? lag / m2 : Number.NaN),
});
