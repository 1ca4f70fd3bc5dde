'use client';

import { AnalysisCharts, type ChartSeries } from './AnalysisCharts';
import type { AnalysisView } from '@/lib/analysis/view';

/** The report's charts: the record and the first two indicators, so the page fits on one printed sheet. */
export function ReportCharts({ view, series, marks }: { view: AnalysisView; series: ChartSeries; marks: { at: number; note: string; kind?: 'tipping-point' | 'maintenance' }[] }) {
  return <AnalysisCharts view={{ ...view, indicators: view.indicators.slice(0, 2) }} series={series} marks={marks} idPrefix="report" compact />;
}
