import type { RuleRecord } from '@/lib/alerts/rules';
import { INDICATOR_DIRECTIONS, trendDirectionOf, type RuleDirection, type TrendDirection } from '@/lib/engine/direction';
import type { IndicatorName } from '@/lib/engine/settings';

const DAY_MS = 86_400_000;

/** How a tau is read, in the words shown beside it. */
export function directionWord(d: TrendDirection): string {
  return d === 'rising' ? '↑ rising' : d === 'falling' ? '↓ falling' : '↕ either way';
}

/** A rule's direction; rules stored before directions existed read their indicator's own. */
export function ruleDirection(r: RuleRecord): TrendDirection {
  const d = (r as RuleRecord & { direction?: RuleDirection }).direction;
  return d ? trendDirectionOf(d) : INDICATOR_DIRECTIONS[r.indicator as IndicatorName];
}

export function yearsText(years: number): string {
  return years >= 1 ? `${years.toFixed(2)} years` : `${(years * 365.25).toFixed(years * 365.25 >= 10 ? 0 : 1)} days`;
}

export function leadText(ms: number | null): string {
  if (ms === null) return 'no warning';
  const days = ms / DAY_MS;
  return days >= 365 ? `${(days / 365.25).toFixed(1)} years` : days >= 1 ? `${days.toFixed(days >= 10 ? 0 : 1)} days` : `${(ms / 3_600_000).toFixed(1)} hours`;
}
