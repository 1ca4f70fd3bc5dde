'use client';

import { useMemo } from 'react';
import { useQuery } from '@tanstack/react-query';
import { api } from '@/components/api';
import { FLAG_SHAPES, type FlaggedPoint } from '@/lib/quality/flags';
import { ChartFrame } from '@/components/charts/ChartFrame';
import { TimeChart } from '@/components/charts/TimeChart';
import { bandKeys, chartRows } from '@/lib/analysis/chart-rows';
import { SE_BAND_Z } from '@/lib/analysis/curves';
import type { AnalysisView } from '@/lib/analysis/view';
import type { SeriesChart } from '@/lib/schemas/account';
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
 * The evidence charts of one analysis as small multiples: the record with its trend, the residuals and each
 * indicator's rolling curve, in the reader's order (`charts`; indicators the analysis lacks are skipped), all on
 * one shared time axis (same domain, same y-axis width, so instants line up down the stack). Every chart draws the
 * marked tipping points, maintenance breaks, detected abrupt shifts and the line where the analysed stretch starts
 * (its reason written once, on the first chart); indicator charts also show the span of one rolling window.
 */
export function AnalysisCharts({
  view,
  series,
  marks = [],
  idPrefix = '',
  compact = false,
  charts,
}: {
  view: AnalysisView;
  series: ChartSeries;
  marks?: { at: number; note: string; kind?: 'tipping-point' | 'maintenance' }[];
  idPrefix?: string;
  /** shorter charts, without the residuals unless asked for (report, alert evidence) */
  compact?: boolean;
  /** which charts, in this order; default: the record, the residuals (unless compact) and every indicator */
  charts?: readonly SeriesChart[];
}) {
  const rows = useMemo(() => chartRows(view.curves), [view.curves]);
  const last = view.curves.time[view.curves.time.length - 1];
  const first = view.curves.time[0];
  const windowBand = last !== undefined ? { from: Math.max(first, last - view.windowSpanMs), to: last } : null;
  const base = `${series.slug}${idPrefix ? `-${idPrefix}` : ''}`;
  const shifts = view.shifts;
  const stretchAt = view.stretch?.from ?? null;
  const xDomain: [number, number] | null =
    first === undefined ? null : [Math.min(first, windowBand?.from ?? first, stretchAt ?? first), Math.max(last, windowBand?.to ?? last, stretchAt ?? last)];
  // Shifts before the drawn stretch are not on the charts; the count says so and the quality panel lists them all.
  const before = first === undefined ? 0 : shifts.filter((shift) => shift.time < first).length;
  const shiftNote = shifts.length
    ? ` · ${shifts.length} abrupt shift${shifts.length === 1 ? '' : 's'} detected${before ? ` (${before} before the analysed stretch, listed under data quality)` : ''}`
    : '';
  const order = charts ?? (['record', ...(compact ? [] : ['residuals']), ...view.indicators] as SeriesChart[]);
  const shown = order.filter((key) => key === 'record' || key === 'residuals' || view.indicators.includes(key));
  const height = compact ? 140 : 150;
  // Flagged points of the drawn span, for the record chart: they change when flags are re-run or overridden.
  const flags = useQuery({
    queryKey: ['flagged', series.slug, xDomain?.[0], xDomain?.[1]],
    queryFn: ({ signal }) =>
      api<{ points: FlaggedPoint[]; total: number }>(
        `/api/series/${series.slug}/observations/flags?from=${Math.floor(xDomain![0])}&to=${Math.ceil(xDomain![1])}`,
        { signal },
      ),
    enabled: xDomain !== null && shown.includes('record'),
  });
  const flagNote = flags.isError
    ? 'Quality flags could not be loaded.'
    : flags.data
      ? flags.data.total === 0
        ? 'No point of this span is flagged.'
        : `${flags.data.total} flagged point${flags.data.total === 1 ? '' : 's'}${flags.data.total > flags.data.points.length ? ` (first ${flags.data.points.length} drawn)` : ''}: ${[3, 4].map((flag) => `${FLAG_SHAPES[flag as 3 | 4]!.symbol} ${FLAG_SHAPES[flag as 3 | 4]!.label}`).join(' · ')}`
      : 'Checking quality flags…';
  const common = { rows, timeZone: series.timeZone, marks, shifts, xDomain, height };

  return (
    <div className="space-y-2">
      {shown.map((key, i) => {
        // The start line is drawn on every chart; its reason is written once, on the first.
        const stretchStart =
          stretchAt === null ? null : { at: stretchAt, label: i === 0 && view.stretch ? stretchReason(view.stretch.startsAfter) : undefined };
        if (key === 'record') {
          return (
            <ChartFrame
              key={key}
              title={`${series.name}: record and trend`}
              fileName={`${base}-record`}
              testId="chart-record"
              legend={
                <>
                  {`${view.n} points analysed${view.stretch ? `, ${stretchReason(view.stretch.startsAfter)}` : ''} · detrending: ${view.settings.detrend}${shiftNote}`}
                  <span className="block" data-testid="flag-legend">
                    {flagNote}
                  </span>
                </>
              }
            >
              <TimeChart
                {...common}
                unit={series.unit}
                stretchStart={stretchStart}
                flagged={flags.data?.points}
                lines={[
                  { key: 'value', label: `value${series.unit ? ` (${series.unit})` : ''}`, color: 'ink-soft', width: 1 },
                  { key: 'trend', label: 'trend', color: 'tide', width: 2.5 },
                ]}
              />
            </ChartFrame>
          );
        }
        if (key === 'residuals') {
          return (
            <ChartFrame key={key} title="Residuals (value − trend)" fileName={`${base}-residuals`} testId="chart-residuals">
              <TimeChart
                {...common}
                unit={series.unit}
                stretchStart={stretchStart}
                zeroLine
                lines={[{ key: 'residual', label: 'residual', color: 'ink-faint', width: 1 }]}
              />
            </ChartFrame>
          );
        }
        const sparse = (view.curves.evaluatedEvery?.[key] ?? 1) > 1;
        const band = view.curves.bands?.[key] ? bandKeys(key) : null;
        return (
          <div key={key} id={idPrefix ? undefined : `chart-${key}`}>
            <ChartFrame
              title={`${indicatorLabel(key, 'title')} in a rolling window`}
              fileName={`${base}-${key}`}
              testId={`chart-${key}`}
              legend={
                <>
                  <span data-testid={`trend-${key}`}>{trendLegend(view, key)}</span>
                  {band ? (
                    <span className="block" data-testid={`band-${key}`}>
                      {`Dashed lines: value ± ${SE_BAND_Z} standard errors of each window's estimate (a 95 % interval, normal approximation).`}
                    </span>
                  ) : null}
                </>
              }
            >
              <TimeChart
                {...common}
                stretchStart={stretchStart}
                windowBand={windowBand}
                lines={[
                  {
                    key,
                    label: `${indicatorLabel(key)} (window of ${view.windowPoints} points${sparse ? `, every ${view.curves.evaluatedEvery![key]}th window` : ''})`,
                    color: 'tide',
                    width: 2,
                    sparse,
                  },
                  ...(band
                    ? ([
                        { key: band.upper, label: `+${SE_BAND_Z} SE`, color: 'ink-faint', width: 1, dashed: true, sparse, edge: true },
                        { key: band.lower, label: `−${SE_BAND_Z} SE`, color: 'ink-faint', width: 1, dashed: true, sparse, edge: true },
                      ] as const)
                    : []),
                ]}
              />
            </ChartFrame>
          </div>
        );
      })}
    </div>
  );
}
