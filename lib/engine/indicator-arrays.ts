import type { IndicatorName } from './indicators';

/**
 * A result's indicator arrays in both forms: typed (NaN where none), as the engine computes them, and (number | null)[]
 * as results carry them, built on first read. Pure and browser-safe, so the chart curves (lib/analysis/curves.ts)
 * can thin the typed arrays without loading the engine.
 */
type NullableIndicators = Partial<Record<IndicatorName, (number | null)[]>>;
type TypedIndicators = Partial<Record<IndicatorName, Float64Array>>;

/** NaN and ±Infinity as null. O(n). */
export function toNullable(a: Float64Array): (number | null)[] {
  const out = new Array<number | null>(a.length);
  for (let i = 0; i < a.length; i++) out[i] = Number.isFinite(a[i]) ? a[i] : null;
  return out;
}

/** The typed indicator arrays behind each result, for summaries that need no per-point copies. */
const rawIndicators = new WeakMap<object, TypedIndicators>();

/**
 * Indicator arrays as (number | null)[] built on first read and cached: a million-point array of boxed
 * numbers costs ~100 ms and ~24 MB, which a summary-only caller should not pay. Enumerable getters, so
 * JSON.stringify, spreading and Object.entries see ordinary arrays.
 */
export function lazyIndicators(values: TypedIndicators): NullableIndicators {
  const out: NullableIndicators = {};
  for (const name of Object.keys(values) as IndicatorName[]) {
    let cache: (number | null)[] | undefined;
    Object.defineProperty(out, name, { enumerable: true, get: () => (cache ??= toNullable(values[name]!)) });
  }
  rawIndicators.set(out, values);
  return out;
}

/** The typed arrays behind indicators made by lazyIndicators (undefined for others, e.g. read back from JSON). O(1). */
export function typedIndicators(indicators: NullableIndicators): TypedIndicators | undefined {
  return rawIndicators.get(indicators);
}

/** The indicator arrays of a result as typed arrays (NaN where none), without building the nullable copies. O(n) at most. */
export function indicatorArrays(result: { indicators: NullableIndicators }): TypedIndicators {
  const typed = typedIndicators(result.indicators);
  if (typed) return typed;
  return Object.fromEntries(
    Object.entries(result.indicators).map(([name, values]) => [name, Float64Array.from(values!, (v) => (v === null ? Number.NaN : v))]),
  ) as TypedIndicators;
}
