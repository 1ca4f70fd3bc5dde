/** P(X ≤ k) for X ~ Binomial(n, p), summed directly. O(k). */
export function binomCdf(k: number, n: number, p: number): number {
  let term = Math.pow(1 - p, n);
  let sum = term;
  for (let i = 1; i <= k; i++) {
    term *= ((n - i + 1) / i) * (p / (1 - p));
    sum += term;
  }
  return sum;
}

/**
 * Central interval [lo, hi] of Binomial(n, p) holding at least `level` of its mass: lo is the smallest k with
 * P(X ≤ k) > (1 − level)/2 and hi the smallest k with P(X ≤ k) ≥ 1 − (1 − level)/2 (equal-tailed, common practice).
 */
export function binomialInterval(n: number, p: number, level: number): { lo: number; hi: number } {
  const tail = (1 - level) / 2;
  let lo = 0;
  while (binomCdf(lo, n, p) <= tail) lo++;
  let hi = lo;
  while (binomCdf(hi, n, p) < 1 - tail) hi++;
  return { lo, hi };
}
