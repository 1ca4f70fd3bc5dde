import { Caution } from '@/components/Caution';
import { LocalTime } from '@/components/LocalTime';
import { Empty } from '@/components/States';
import { CELL_TIGHT, DataTable } from '@/components/ui/DataTable';
import { PrintButton } from '@/components/workbench/PrintButton';
import { ProvenancePanel } from '@/components/provenance/ProvenancePanel';
import { ReportCharts } from '@/components/workbench/ReportCharts';
import { requireRole } from '@/lib/auth/guard';
import { formatP, formatTau } from '@/lib/display/format';
import { describeExtent, formatDirection, indicatorLabel, stretchReason } from '@/lib/display/analysis-labels';
import { listRules } from '@/lib/alerts/rules';
import { reportIndicators } from '@/lib/series/evidence';
import { fetchWorkbench } from '@/lib/series/workbench';
import { foundOr404 } from '@/lib/http/page';

export const metadata = { title: 'Report' };

/** One A4 sheet: no page chrome, charts kept whole, link targets not printed. */
const PRINT_STYLE = `@media print {
  @page { size: A4 portrait; margin: 12mm; }
  body { font-size: 11px; }
  main { max-width: none !important; padding: 0 !important; }
  .report figure { break-inside: avoid; border: none; padding: 0; }
  .report { box-shadow: none; }
}`;

/** A one-page summary for the people the team reports to; the print stylesheet drops the navigation. */
export default async function SeriesReportPage({ params }: { params: Promise<{ slug: string }> }) {
  const actor = await requireRole('viewer');
  const { slug } = await params;
  const bench = await foundOr404(() => fetchWorkbench(slug));
  // A server component renders once per request, so the report states the moment it was prepared.
  // eslint-disable-next-line react-hooks/purity
  const preparedAt = Date.now();
  const { series, view } = bench;
  const rules = await listRules(series.id);
  return (
    <article className="report mx-auto max-w-4xl space-y-4 bg-card p-6 print:p-0">
      <style>{PRINT_STYLE}</style>
      <div className="no-print flex justify-end">
        <PrintButton />
      </div>
      <header>
        <p className="font-mono text-xs uppercase tracking-widest text-tide">Brinkwatch · series report</p>
        <h1 className="text-2xl font-semibold">{series.name}</h1>
        <p className="text-sm text-ink-soft">
          {series.site || 'No site'} · {series.unit || 'no unit'} · prepared for {actor.name} on{' '}
          <LocalTime t={preparedAt} timeZone={series.timeZone} withZone />
        </p>
      </header>
      <Caution />
      {!view ? (
        <Empty>This series has not been analysed yet.</Empty>
      ) : (
        <>
          <DataTable
            caption="Trend of each indicator over the record"
            showCaption
            frame="plain"
            className="num"
            columns={['Indicator', 'Kendall tau', 'Tested', 'Kendall p (descriptive)', 'Surrogate p', 'Latest value']}
          >
            {view.indicators.map((name) => {
              const values = view.curves.indicators[name] ?? [];
              const latest = [...values].reverse().find((v) => v !== null && v !== undefined);
              return (
                <tr key={name}>
                  <th scope="row" className={`${CELL_TIGHT} text-left font-medium`}>
                    {indicatorLabel(name, 'title')}
                  </th>
                  <td className={CELL_TIGHT}>{formatTau(view.kendall[name]?.tau)}</td>
                  <td className={CELL_TIGHT}>{formatDirection(view.significance[name]?.direction ?? view.kendall[name]?.direction ?? 'rising')}</td>
                  <td className={CELL_TIGHT}>{formatP(view.kendall[name]?.p)}</td>
                  <td className={CELL_TIGHT}>{view.significance[name] ? `${formatP(view.significance[name]!.p)} (${view.significance[name]!.count})` : '–'}</td>
                  <td className={CELL_TIGHT}>{latest === undefined || latest === null ? '–' : Number(latest.toPrecision(4))}</td>
                </tr>
              );
            })}
          </DataTable>
          <p className="text-sm text-ink-soft">
            Settings: detrending {view.settings.detrend}
            {view.bandwidthPoints !== null && view.settings.detrend !== 'moving-average'
              ? `, bandwidth ${describeExtent(view.settings.bandwidth, 'the stretch')}`
              : ''}
            , rolling window {describeExtent(view.settings.window, 'the stretch')} ({view.windowPoints} of {view.n} points
            {view.stretch ? `, ${stretchReason(view.stretch.startsAfter)}` : ''}), seasonal removal {view.settings.seasonal}. Analysed{' '}
            <LocalTime t={bench.snapshot?.createdAt} timeZone={series.timeZone} withZone />.
          </p>
          <ReportCharts
            view={view}
            series={{ slug: series.slug, name: series.name, unit: series.unit, timeZone: series.timeZone }}
            marks={bench.marks}
            indicators={reportIndicators(view.indicators, rules)}
          />
          <section aria-labelledby="provenance-heading">
            <h2 id="provenance-heading" className="mb-1 font-semibold">
              Reproducing these numbers
            </h2>
            <ProvenancePanel analyses={bench.provenance ? [bench.provenance] : []} />
          </section>
        </>
      )}
    </article>
  );
}
