import { erfc } from './normal';
import type { IndicatorName } from './settings';

/** Which way an indicator is expected to move under critical slowing down. */
export type TrendDirection = 'rising' | 'falling' | 'two-sided';
/** What rules store: 'either' is the rule-facing name of 'two-sided'. */
export type RuleDirection = 'rising' | 'falling' | 'either';

/**
 * Expected direction of each indicator as a system slows down towards a fold: variance, sd, cv and lag-1
 * autocorrelation rise and the recovery rate falls (Scheffer et al. (2009), Nature 461, 53–59; Dakos et al.
 * (2012), PLoS ONE 7, e41010, from memory); skewness and kurtosis can move either way depending on which side
 * of the state the other basin lies (Guttal & Jayaprakash (2008), Ecol. Lett. 11, 450–460, from memory).
 */
export const INDICATOR_DIRECTIONS: Record<IndicatorName, TrendDirection> = {
  variance: 'rising',
  sd: 'rising',
  cv: 'rising',
  ac1: 'rising',
  recovery: 'falling',
  skewness: 'two-sided',
  kurtosis: 'two-sided',
};

/** A rule's direction as the engine's: 'either' → 'two-sided'. O(1). */
export function trendDirectionOf(d: RuleDirection): TrendDirection {
  return d === 'either' ? 'two-sided' : d;
}

/** tau seen in the direction: rising → tau, falling → −tau, two-sided → |tau| (NaN stays NaN). O(1). */
export function orientedTau(tau: number, direction: TrendDirection): number {
  return direction === 'rising' ? tau : direction === 'falling' ? -tau : Math.abs(tau);
}

/**
 * Normal-approximation p of a z statistic in a direction: rising P(Z ≥ z) = erfc(z/√2)/2, falling
 * P(Z ≤ z) = erfc(−z/√2)/2, two-sided P(|Z| ≥ |z|) = erfc(|z|/√2). NaN stays NaN. O(1).
 * Source: Abramowitz & Stegun (1964), 26.2.29.
 */
export function normalPInDirection(z: number, direction: TrendDirection): number {
  if (direction === 'two-sided') return erfc(Math.abs(z) / Math.SQRT2);
  return erfc((direction === 'rising' ? z : -z) / Math.SQRT2) / 2;
}
