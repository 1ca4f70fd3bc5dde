import type { IndicatorName } from './settings';

/** Which way an indicator's trend counts as evidence: up, down, or either way. */
export type TrendDirection = 'rising' | 'falling' | 'two-sided';
/** What rules store; 'either' means the same as 'two-sided'. */
export type RuleDirection = 'rising' | 'falling' | 'either';

/**
 * Expected direction of each indicator under critical slowing down: variance, sd, cv and lag-1 autocorrelation
 * rise, the recovery rate falls; skewness and kurtosis may move either way (Scheffer et al. 2009, Nature 461:53;
 * Dakos et al. 2012, PLoS ONE 7:e41010 — from memory).
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

/** A rule's direction as a test direction: 'either' → 'two-sided'. O(1). */
export function trendDirectionOf(d: RuleDirection): TrendDirection {
  return d === 'either' ? 'two-sided' : d;
}

/**
 * Tau seen in the direction: rising → τ, falling → −τ, two-sided → |τ| (NaN stays NaN), so "at least minTau"
 * reads the same whichever way a rule looks. O(1). Common practice.
 */
export function orientedTau(tau: number, direction: TrendDirection): number {
  if (direction === 'falling') return -tau;
  if (direction === 'two-sided') return Math.abs(tau);
  return tau;
}
