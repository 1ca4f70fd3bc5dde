/** Which way an indicator is expected to move under critical slowing down. */
export type TrendDirection = 'rising' | 'falling' | 'two-sided';

/** The centred moments of one window of w points (see windowMoments in lib/engine/rolling.ts). */
export interface WindowMomentValues {
  w: number;
  /** Σ(r − r̄)² */
  m2: number;
  /** Σ(r − r̄)³ */
  m3: number;
  /** Σ(r − r̄)⁴ */
  m4: number;
  /** Σ_{j=1}^{w−1}(r_j − r̄)(r_{j+1} − r̄) */
  lag: number;
  /** mean of the raw (not detrended) values of the window */
  rawMean: number;
  /** sampling interval in the rate unit */
  dt: number;
}

/** What every indicator declares: the facts README, rules, charts and the command line take from it. */
interface IndicatorFacts<N extends string> {
  name: N;
  /** Expected direction as a system loses resilience; the rule default and the surrogate test's tail. */
  direction: TrendDirection;
  /** Definition on the residual r of a window of w points, as README shows it. */
  formula: string;
  /** Cost per evaluated window. */
  cost: string;
  source: string;
  /** Part of the default indicator set (new indicators are opt-in through settings `indicators`). */
  byDefault: boolean;
  /**
   * A strictly monotone transform of another indicator, defined wherever that one is: its Kendall tau is the
   * other's times `sign` (rank statistics are invariant under monotone transforms), so it is reused, not recomputed.
   */
  trendOf?: { name: string; sign: 1 | -1 };
}

/** An indicator computed in O(1) per window from the window's sliding moments. */
export interface MomentIndicator<N extends string = string> extends IndicatorFacts<N> {
  kind: 'moments';
  /** Needs the raw values' rolling mean (the cv denominator). */
  needsRawMean?: boolean;
  /** The value, or any non-finite number where it is undefined (read as NaN). */
  fromMoments(m: WindowMomentValues): number;
}

/** One window's value and its companion values, in the order the definition names them. */
export interface WindowValue {
  value: number;
  companions?: readonly number[];
}

/**
 * An indicator computed from the window's residuals themselves (more than O(1) per window). The analysis
 * evaluates it at a stride of windows (settings `maxEvaluatedWindows`), and its Kendall tau is taken over
 * the evaluated windows.
 */
export interface WindowIndicator<N extends string = string> extends IndicatorFacts<N> {
  kind: 'window';
  /** Names of the per-window values carried beside the indicator (e.g. a standard error). */
  companions: readonly string[];
  /** The window's value from its residuals r (length w); NaN where undefined. */
  evaluate(r: Float64Array, dt: number): WindowValue;
}

export type AnyIndicator = MomentIndicator | WindowIndicator;

/** Declares an O(1) indicator, keeping its name as a literal type. */
export function momentIndicator<N extends string>(definition: Omit<MomentIndicator<N>, 'kind'>): MomentIndicator<N> {
  return { kind: 'moments', ...definition };
}

/** Declares a per-window indicator, keeping its name as a literal type. */
export function windowIndicator<N extends string>(definition: Omit<WindowIndicator<N>, 'kind'>): WindowIndicator<N> {
  return { kind: 'window', ...definition };
}
