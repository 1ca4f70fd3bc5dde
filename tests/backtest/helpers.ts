import type { ReplayRule } from '@/lib/backtest/replay';

export const DAY = 86_400_000;

/** n daily instants from 1 January 2000 (UTC). */
export const days = (n: number) => Float64Array.from({ length: n }, (_, i) => Date.UTC(2000, 0, 1) + i * DAY);

/** An ac1 rule at tau ≥ 0.3 held for `persistence` cycles (3 unless given), no other criterion, with overrides. */
export const rule = (over: Partial<ReplayRule> = {}): ReplayRule => ({
  indicator: 'ac1',
  minTau: 0.3,
  maxSurrogateP: null,
  levelThreshold: null,
  levelDirection: 'above',
  persistence: 3,
  quietPeriodHours: 0,
  ...over,
});
