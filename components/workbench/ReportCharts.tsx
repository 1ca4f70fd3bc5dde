'use client';

import { AnalysisCharts, type ChartSeries } from './AnalysisCharts';
import type { AnalysisView } from '@/lib/analysis/view';
import type { IndicatorName } from '@/lib/engine/settings';

/** The report's charts: the record and the indicators the series' rules watch, small enough to fit one printed sheet. */
export function ReportCharts({
  view,
  series,
  marks,
  indicators,
}: {
  view: AnalysisView;
  series: ChartSeries;
  marks: { at: number; note: string; kind?: 'tipping-point' | 'maintenance' }[];
  indicators: IndicatorName[];
}) {
  return <AnalysisCharts view={view} series={series} marks={marks} idPrefix="report" compact charts={['record', ...indicators]} />;
}
