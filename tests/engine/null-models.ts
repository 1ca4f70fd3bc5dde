import { simulateAr1 } from '@/lib/demo/models';
import { runAnalysis, type AnalysisInput } from '@/lib/engine/analyze';
import { RandomStream } from '@/lib/engine/random';
import { analysisSettingsSchema, type IndicatorName } from '@/lib/engine/settings';
import { binomialInterval } from './binomial';

export const DAY = 86_400_000;
export const NOMINAL = 0.05;

/**
 * Share-of-rejections check of a surrogate test: under a null (no approach to any tipping point) a valid test has
 * P(p ≤ 0.05) = 5/100 for 99 surrogates (p = (1 + #{as extreme})/100, exchangeability; Davison & Hinkley (1997),
 * Sec. 4.2.1, from memory), so the count of rejections in R independent seeded series is Binomial(R, 0.05); the
 * check is that it lies in the equal-tailed central 99.9% interval (binomialInterval). Shift detection is off:
 * these check the surrogate test alone, and a (rare) spurious shift would legitimately shorten the stretch.
 */
export async function rejectionCounts(
  replicates: number,
  indicators: IndicatorName[],
  make: (rng: RandomStream, replicate: number) => AnalysisInput,
  settings: Record<string, unknown> = {},
): Promise<{ counts: Record<string, number>; lo: number; hi: number }> {
  const parsed = analysisSettingsSchema.parse({ indicators, surrogates: 99, shiftDetection: 'off', ...settings });
  const counts: Record<string, number> = Object.fromEntries(indicators.map((k) => [k, 0]));
  for (let r = 0; r < replicates; r++) {
    const input = make(new RandomStream(90210, r), r);
    const res = await runAnalysis(input, { ...parsed, seed: 7000 + r }, { parallel: false });
    for (const k of indicators) if ((res.significance[k]!.p ?? 1) <= NOMINAL) counts[k]++;
  }
  return { counts, ...binomialInterval(replicates, NOMINAL, 0.999) };
}

/** Stationary Gaussian AR(1) (lib/demo/models.ts simulateAr1) with its own stream per replicate. */
export function ar1(n: number, phi: number, seed: number, stream: number): Float64Array {
  return simulateAr1({ n, phi, sigma: 1, seed, stream });
}

/** Student-t deviate with df degrees of freedom: Z/√(χ²_df/df). O(df). Source: Johnson, Kotz & Balakrishnan (1995), Continuous Univariate Distributions 2, Ch. 28 (from memory). */
export function studentT(rng: RandomStream, df: number): number {
  let chi = 0;
  for (let k = 0; k < df; k++) {
    const z = rng.normal();
    chi += z * z;
  }
  return rng.normal() / Math.sqrt(chi / df);
}
