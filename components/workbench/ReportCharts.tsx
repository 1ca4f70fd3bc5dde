'use client';

import { AnalysisCharts, type ChartSeries } from './AnalysisCharts';
import type { AnalysisView } from '@/lib/analysis/view';

/** The report's charts: the record and the first two indicators, so the page fits on one printed sheet. */
export function ReportCharts({ view, series, transitions }: { view: AnalysisView; series: ChartSeries; transitions: { at: number; note: string; kind?: 'transition' | 'maintenance' }[] }) {
  return <AnalysisCharts view={{ ...view, indicators: view.indicators.slice(0, 2) }} series={series} transitions={transitions} idPrefix="report" compact />;
}
