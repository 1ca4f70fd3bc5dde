import type { IndicatorName } from './settings';

/** Which way an indicator is expected to move under critical slowing down. */
export type TrendDirection = 'rising' | 'falling' | 'two-sided';
/** What a rule stores; 'either' is the rule's word for 'two-sided'. */
export type RuleDirection = 'rising' | 'falling' | 'either';

/**
 * Expected direction of each indicator under slowing down: variance, sd, cv and lag-1 autocorrelation rise,
 * the recovery rate falls, skewness and kurtosis can move either way. Source: Scheffer et al. (2009), Nature
 * 461, 53–59; Dakos et al. (2012), PLoS ONE 7, e41010 (from memory).
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

/** 'either' → 'two-sided'; the others unchanged. O(1). */
export function trendDirectionOf(d: RuleDirection): TrendDirection {
  return d === 'either' ? 'two-sided' : d;
}

/** tau seen in the direction: rising → tau, falling → −tau, two-sided → |tau| (NaN stays NaN). O(1). */
export function orientedTau(tau: number, direction: TrendDirection): number {
  return direction === 'rising' ? tau : direction === 'falling' ? -tau : Math.abs(tau);
}
