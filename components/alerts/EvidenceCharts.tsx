'use client';

import { AnalysisCharts, type ChartSeries } from '@/components/workbench/AnalysisCharts';
import { Empty } from '@/components/States';
import type { AnalysisView } from '@/lib/analysis/view';

/**
 * The alert's indicator as it stood when the alert opened, and as it stands in the latest evaluation; for an
 * abrupt-shift alert (no indicator) the record itself.
 */
export function EvidenceCharts({
  first,
  latest,
  indicator,
  series,
  marks,
}: {
  first: AnalysisView | null;
  latest: AnalysisView | null;
  indicator: string | null;
  series: ChartSeries;
  marks: { at: number; note: string }[];
}) {
  const only = (view: AnalysisView) => ({ ...view, indicators: view.indicators.filter((name) => name === indicator) });
  return (
    <div className="grid grid-cols-1 gap-4 xl:grid-cols-2">
      <div>
        <h3 className="mb-2 text-sm font-semibold">When the alert opened</h3>
        {first ? (
          <AnalysisCharts view={only(first)} series={series} marks={marks} idPrefix="at-alert" compact />
        ) : (
          <Empty>The first snapshot holds no curves.</Empty>
        )}
      </div>
      <div>
        <h3 className="mb-2 text-sm font-semibold">Latest evaluation</h3>
        {latest ? <AnalysisCharts view={only(latest)} series={series} marks={marks} idPrefix="latest" compact /> : <Empty>No later snapshot yet.</Empty>}
      </div>
    </div>
  );
}
