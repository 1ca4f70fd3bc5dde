import { momentIndicator } from './definition';

/**
 * Coefficient of variation: the residual sd over the absolute mean of the raw values of the window. O(1).
 * Source: NIST StRD univariate summary statistics (sd); Dakos et al. (2012), PLoS ONE 7, e41010 (from memory).
 */
export const cv = momentIndicator({
  name: 'cv',
  direction: 'rising',
  formula: 'cv = s/|x̄| (x̄ the mean of the raw values of the window)',
  cost: 'O(1) per window from sliding sums',
  source: 'Dakos et al. (2012), PLoS ONE 7, e41010 (from memory)',
  byDefault: true,
  needsRawMean: true,
  fromMoments: ({ w, m2, rawMean }) => Math.sqrt(m2 / (w - 1)) / Math.abs(rawMean),
});
