import { INDICATORS, type IndicatorName } from './indicators';
import type { TrendDirection } from './indicators/definition';
import { erfc } from './normal';

export type { TrendDirection } from './indicators/definition';
/** What rules store: 'either' is the rule-facing name of 'two-sided'. */
export type RuleDirection = 'rising' | 'falling' | 'either';

/**
 * Expected direction of each indicator as a system slows down towards a fold, as each indicator's file declares it
 * with its source (lib/engine/indicators).
 */
export const INDICATOR_DIRECTIONS = Object.fromEntries(INDICATORS.map((d) => [d.name, d.direction])) as Record<IndicatorName, TrendDirection>;

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
