import { linearFit } from '../detrend';
import { windowIndicator } from './definition';

/**
 * Restoring rate by regression: the OLS slope b of Δr_j = r_{j+1} − r_j on r_j (with intercept) over the window's
 * w − 1 pairs, divided by Δt, with its standard error SE = √(SSE/(w − 3)/Sxx)/Δt. Negative for a stable state,
 * rising towards 0 as resilience is lost. NaN for w < 4 or a flat window. Cost O(w) per window (three passes).
 */
export const restoringRate = windowIndicator({
  name: 'restoring-rate',
  direction: 'rising',
  formula: 'λ = b/Δt, b the OLS slope (with intercept) of r_{j+1} − r_j on r_j over the w − 1 pairs; SE = √(SSE/(w − 3)/Σ(r_j − r̄)²)/Δt',
  cost: 'O(w) per evaluated window',
  source: 'Boers (2021), Nat. Clim. Change 11, 680–688; standard error: Draper & Smith (1998), Applied Regression Analysis, Ch. 1',
  byDefault: false,
  companions: ['standardError'],
  evaluate(r, dt) {
    const pairs = r.length - 1;
    if (pairs < 3) return { value: Number.NaN, companions: [Number.NaN] };
    const step = new Float64Array(pairs);
    for (let j = 0; j < pairs; j++) step[j] = r[j + 1] - r[j];
    const fit = linearFit(r.subarray(0, pairs), step);
    if (!(fit.sxx > 0)) return { value: Number.NaN, companions: [Number.NaN] };
    return { value: fit.slope / dt, companions: [fit.residualSd / Math.sqrt(fit.sxx) / dt] };
  },
});
