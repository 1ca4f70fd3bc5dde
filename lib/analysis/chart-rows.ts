import type { AnalysisView } from './view';

/** Browser-safe (no server imports): the charts' row shape from a view's columnar curves. */
function finite(v: number | null): number | null {
  return v !== null && Number.isFinite(v) ? v : null;
}

/** Row keys of an indicator's standard-error band edges (see SnapshotCurves.bands). */
export const bandKeys = (indicator: string) => ({ lower: `${indicator}:lower`, upper: `${indicator}:upper` });

/**
 * One row per point for the chart library: { t, value, trend, residual, <indicator>, and each band's
 * <indicator>:lower and <indicator>:upper: number | null }. O(n).
 */
export function chartRows(curves: AnalysisView['curves']): Record<string, number | null>[] {
  return curves.time.map((t, i) => {
    const row: Record<string, number | null> = {
      t,
      value: finite(curves.value[i]),
      trend: finite(curves.trend[i]),
      residual: finite(curves.residual[i]),
    };
    for (const [name, values] of Object.entries(curves.indicators)) row[name] = values?.[i] ?? null;
    for (const [name, band] of Object.entries(curves.bands ?? {})) {
      const keys = bandKeys(name);
      row[keys.lower] = band.lower[i] ?? null;
      row[keys.upper] = band.upper[i] ?? null;
    }
    return row;
  });
}
