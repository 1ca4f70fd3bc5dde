import { linearFit } from '../detrend';
import { erfc } from '../normal';
import { windowIndicator } from './definition';

/**
 * Conditional heteroskedasticity (Engle's Lagrange multiplier statistic at lag 1): fit r_{j+1} = a + φ r_j + ε_j
 * by OLS over the window's w − 1 pairs, regress ε_j² on ε_{j−1}² with intercept over the m = w − 2 pairs, and
 * take LM = m·R² (R² = Sxy²/(Sxx·Syy), free of the cancellation in 1 − SSE/Syy), with its χ²(1) p-value
 * P(χ²₁ ≥ LM) = erfc(√(LM/2)). NaN for w < 5 or a flat window. Cost O(w) per window.
 */
export const ch = windowIndicator({
  name: 'ch',
  direction: 'rising',
  formula: 'LM = m·R² of ε_j² on ε_{j−1}² (m = w − 2 pairs), ε the OLS residuals of r_{j+1} = a + φ r_j + ε_j; p = P(χ²₁ ≥ LM)',
  cost: 'O(w) per evaluated window',
  source: 'Seekell, Carpenter & Pace (2011), Am. Nat. 178, 442–451; Engle (1982), Econometrica 50, 987–1007',
  byDefault: false,
  companions: ['p'],
  evaluate(r) {
    const pairs = r.length - 1;
    if (pairs < 4) return { value: Number.NaN, companions: [Number.NaN] };
    const ar = linearFit(r.subarray(0, pairs), r.subarray(1));
    const squared = new Float64Array(pairs);
    for (let j = 0; j < pairs; j++) {
      const e = r[j + 1] - ar.intercept - ar.slope * r[j];
      squared[j] = e * e;
    }
    const arch = linearFit(squared.subarray(0, pairs - 1), squared.subarray(1));
    const lm = ((pairs - 1) * arch.sxy * arch.sxy) / (arch.sxx * arch.syy);
    return { value: lm, companions: [Number.isFinite(lm) ? erfc(Math.sqrt(lm / 2)) : Number.NaN] };
  },
});
