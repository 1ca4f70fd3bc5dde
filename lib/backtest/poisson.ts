import { gammaln } from 'simple-statistics';

/** P(X ≤ k) for X ~ Poisson(λ), summed in log space from the top term down. O(k). */
function poissonCdf(k: number, lambda: number): number {
  if (lambda <= 0) return 1;
  let s = 0;
  for (let j = 0; j <= k; j++) s += Math.exp(-lambda + j * Math.log(lambda) - gammaln(j + 1));
  return Math.min(1, s);
}

/**
 * Exact (Garwood) 95 % interval for a Poisson rate from k events in `exposure` units of time:
 * lower = λ_L/T with P(X ≥ k; λ_L) = 0.025 (0 when k = 0), upper = λ_U/T with P(X ≤ k; λ_U) = 0.025 —
 * equivalently χ²_{2k, 0.025}/2T and χ²_{2k+2, 0.975}/2T. Each bound by 200 bisection steps on the Poisson
 * CDF, O(200·k). Source: Garwood (1936), Biometrika 28, 437–442; the χ² form as in Ulm (1990), Am. J.
 * Epidemiol. 131, 373–375 (from memory). Checked against scipy.stats.chi2.ppf in tests/backtest/replay.test.ts.
 */
export function garwoodInterval(k: number, exposure: number, level = 0.95): [number, number] | null {
  if (!(exposure > 0) || !Number.isInteger(k) || k < 0) return null;
  const a = (1 - level) / 2;
  const solve = (f: (lambda: number) => number): number => {
    let lo = 0;
    let hi = Math.max(10, 4 * (k + 10));
    for (let i = 0; i < 200; i++) {
      const mid = (lo + hi) / 2;
      if (f(mid) > 0) lo = mid;
      else hi = mid;
    }
    return (lo + hi) / 2;
  };
  // P(X ≤ k−1; λ) decreases in λ: the lower bound is where it falls to 1 − a
  const lower = k === 0 ? 0 : solve((l) => poissonCdf(k - 1, l) - (1 - a));
  const upper = solve((l) => poissonCdf(k, l) - a);
  return [lower / exposure, upper / exposure];
}
