/**
 * Complementary error function to about 1e-15 relative, for normal-approximation p-values.
 * x < 1: erfc = 1 − erf with erf(x) = (2/√π) e^{−x²} Σ_k 2^k x^{2k+1} / (1·3·…·(2k+1)) (all terms
 * positive; erfc ≥ 0.157 there, so little cancellation); x ≥ 1: the continued fraction (200 terms)
 * erfc(x) = e^{−x²}/√π · 1/(x + (1/2)/(x + 1/(x + (3/2)/(x + …)))) evaluated backwards.
 * Cost O(1) (at most a few hundred terms). Source: Abramowitz & Stegun (1964), 7.1.6 and 7.1.14.
 */
export function erfc(x: number): number {
  if (Number.isNaN(x)) return Number.NaN;
  if (x < 0) return 2 - erfc(-x);
  if (x < 1) {
    const x2 = x * x;
    let term = x;
    let sum = x;
    for (let k = 1; k < 200; k++) {
      term *= (2 * x2) / (2 * k + 1);
      sum += term;
      if (term < sum * 1e-17) break;
    }
    return 1 - (2 / Math.sqrt(Math.PI)) * Math.exp(-x2) * sum;
  }
  if (x > 27.3) return 0;
  let t = x;
  for (let k = 200; k >= 1; k--) t = x + k / 2 / t;
  return Math.exp(-x * x) / Math.sqrt(Math.PI) / t;
}

/** Two-sided normal p-value P(|Z| ≥ |z|) = erfc(|z|/√2). O(1). Source: Abramowitz & Stegun 26.2.29. */
export function twoSidedNormalP(z: number): number {
  return erfc(Math.abs(z) / Math.SQRT2);
}
