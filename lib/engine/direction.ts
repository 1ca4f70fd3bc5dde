import type { IndicatorName } from './settings';

// TEMP engine contract shim (ENGINE owns this file): exactly the CONTRACT.md shape, so LIVE compiles before the merge.

export type TrendDirection = 'rising' | 'falling' | 'two-sided';
export type RuleDirection = 'rising' | 'falling' | 'either';

export const INDICATOR_DIRECTIONS: Record<IndicatorName, TrendDirection> = {
  variance: 'rising', sd: 'rising', cv: 'rising', ac1: 'rising', recovery: 'falling', skewness: 'two-sided', kurtosis: 'two-sided',
};

export function trendDirectionOf(d: RuleDirection): TrendDirection {
  return d === 'either' ? 'two-sided' : d;
}

/** tau seen in the direction: rising → tau, falling → −tau, two-sided → |tau| (NaN stays NaN). */
export function orientedTau(tau: number, direction: TrendDirection): number {
  return direction === 'rising' ? tau : direction === 'falling' ? -tau : Math.abs(tau);
}
