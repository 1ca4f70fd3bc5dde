'use client';

import { useMemo } from 'react';
import { ChartFrame } from '@/components/charts/ChartFrame';
import { TimeChart } from '@/components/charts/TimeChart';
import { chartRows } from '@/lib/analysis/chart-rows';
import type { AnalysisView } from '@/lib/analysis/view';
import { formatP } from '@/lib/display/format';
import { formatTauDirection, indicatorLabel, stretchReason } from '@/lib/display/analysis-labels';

export interface ChartSeries {
  slug: string;
  name: string;
  unit: string;
  timeZone: string;
}

/**
 * The tau-and-p line each indicator chart carries in its legend: tau with the direction it is tested in, and the
 * surrogate p in that direction. Without surrogates only the Kendall p is at hand, labelled descriptive: it assumes
 * independent values, which overlapping windows are not, so it is no test.
 */
function trendLegend(view: AnalysisView, name: string): string {
  const k = view.kendall[name as keyof AnalysisView['kendall']];
  const s = view.significance[name as keyof AnalysisView['significance']];
  const direction = s?.direction ?? k?.direction ?? 'rising';
  const p = s
    ? `surrogate p ${formatP(s.p)} (${s.count} ${s.method === 'ar1' ? 'AR(1)' : 'phase'} surrogates)`
    : `Kendall p ${formatP(k?.p)} (descriptive only: no surrogates)`;
  return `${formatTauDirection(k?.tau, direction)} · ${p}`;
}

/**
 * The evidence charts of one analysis: raw series with trend, residuals, and every indicator's rolling curve,
 * each with the span of one rolling window drawn at the end, the marked tipping points and detected abrupt shifts
 * marked, and a line where the analysed stretch starts (labelled with its reason on the record chart).
 */
export function AnalysisCharts({ view, series, marks = [], idPrefix = '', compact = false }: {
  view: AnalysisView;
  series: ChartSeries;
  marks?: { at: number; note: string; kind?: 'tipping-point' | 'maintenance' }[];
  idPrefix?: string;
  /** fewer, shorter charts (report, alert evidence) */
  compact?: boolean;
}) {
  const rows = useMemo(() => chartRows(view.curves), [view.curves]);
  const last = view.curves.time[view.curves.time.length - 1];
  const first = view.curves.time[0];
  const windowBand = last !== undefined ? { from: Math.max(first, last - view.windowSpanMs), to: last } : null;
  const base = `${series.slug}${idPrefix ? `-${idPrefix}` : ''}`;
  const shifts = view.shifts;
  // The start line is drawn on every chart; its reason is written once, on the record chart.
  const stretchAt = view.stretch?.from ?? null;
  const stretchLabelled = view.stretch ? { at: view.stretch.from, label: stretchReason(view.stretch.startsAfter) } : null;
  const stretchPlain = stretchAt === null ? null : { at: stretchAt };
  // Shifts before the drawn stretch are not on the charts; the count says so and the quality panel lists them all.
  const before = first === undefined ? 0 : shifts.filter((shift) => shift.time < first).length;
  const shiftNote = shifts.length
    ? ` · ${shifts.length} abrupt shift${shifts.length === 1 ? '' : 's'} detected${before ? ` (${before} before the analysed stretch, listed under data quality)` : ''}`
    : '';
  return (
    <div className="space-y-3">
      <ChartFrame title={`${series.name}: record and trend`} fileName={`${base}-record`} testId="chart-record"
        legend={`${view.n} points analysed${view.stretch ? `, ${stretchReason(view.stretch.startsAfter)}` : ''} · detrending: ${view.settings.detrend}${shiftNote}`}>
        <TimeChart rows={rows} timeZone={series.timeZone} unit={series.unit} marks={marks} shifts={shifts} stretchStart={stretchLabelled} height={compact ? 170 : 220}
          lines={[{ key: 'value', label: `value${series.unit ? ` (${series.unit})` : ''}`, color: 'ink-soft', width: 1 }, { key: 'trend', label: 'trend', color: 'tide', width: 2.5 }]} />
      </ChartFrame>
      {compact ? null : (
      <ChartFrame title="Residuals (value − trend)" fileName={`${base}-residuals`} testId="chart-residuals">
        <TimeChart rows={rows} timeZone={series.timeZone} unit={series.unit} marks={marks} shifts={shifts} stretchStart={stretchPlain} zeroLine height={160}
          lines={[{ key: 'residual', label: 'residual', color: 'ink-faint', width: 1 }]} />
      </ChartFrame>
      )}
      {view.indicators.map((name) => (
        <ChartFrame key={name} title={`${indicatorLabel(name, 'title')} in a rolling window`} fileName={`${base}-${name}`} testId={`chart-${name}`}
          legend={<span data-testid={`trend-${name}`}>{trendLegend(view, name)}</span>}>
          <TimeChart rows={rows} timeZone={series.timeZone} marks={marks} shifts={shifts} stretchStart={stretchPlain} windowBand={windowBand} height={compact ? 150 : 180}
            lines={[{ key: name, label: `${name} (window of ${view.windowPoints} points)`, color: 'tide', width: 2 }]} />
        </ChartFrame>
      ))}
    </div>
  );
}
