import { ErrorNote } from '@/components/States';
import { PrintButton } from '@/components/workbench/PrintButton';
import { PeriodPicker } from '@/components/reports/PeriodPicker';
import { PeriodReportView } from '@/components/reports/PeriodReportView';
import { ScheduleManager } from '@/components/reports/ScheduleManager';
import { requireRole } from '@/lib/auth/guard';
import { roleAtLeast } from '@/lib/auth/roles';
import { fetchSeriesOverview } from '@/lib/overview';
import { buildPeriodReport } from '@/lib/reports/period';
import { previousPeriod } from '@/lib/reports/period-shape';
import { periodReportQuerySchema } from '@/lib/schemas/report';

export const metadata = { title: 'Reports' };

/**
 * A4 with page numbers in the bottom margin (CSS page-margin boxes, which Chromium prints), no navigation, tables
 * repeating their headings on each page and rows kept whole.
 */
const PRINT_STYLE = `@media print {
  @page {
    size: A4 portrait;
    margin: 14mm 12mm 16mm;
    @bottom-left { content: "Brinkwatch period report"; font-size: 8pt; color: #52606d; }
    @bottom-right { content: "Page " counter(page) " of " counter(pages); font-size: 8pt; color: #52606d; }
  }
  body { font-size: 10px; }
  main { max-width: none !important; padding: 0 !important; }
  thead { display: table-header-group; }
  tr, .report-section h2 { break-inside: avoid; break-after: avoid-page; }
  .report a { color: inherit; text-decoration: none; }
}`;

/** Period reports for the people a team answers to: on screen, printed to PDF by the browser, or as CSV tables. */
export default async function ReportsPage({ searchParams }: { searchParams: Promise<Record<string, string | string[] | undefined>> }) {
  const actor = await requireRole('viewer');
  const raw = Object.fromEntries(Object.entries(await searchParams).map(([k, v]) => [k, Array.isArray(v) ? v[0] : v]));
  // A server component renders once per request: the default period is the last whole quarter at that moment.
  // eslint-disable-next-line react-hooks/purity
  const now = Date.now();
  const asked = raw.from || raw.to ? periodReportQuerySchema.safeParse(raw) : null;
  const period = asked?.success ? { from: asked.data.from, to: asked.data.to } : previousPeriod('quarter', now);
  const site = asked?.success ? (asked.data.site ?? null) : raw.site || null;
  const [report, overview] = await Promise.all([buildPeriodReport(period, site, now), fetchSeriesOverview(actor.id, now)]);
  return (
    <section className="space-y-5">
      <style>{PRINT_STYLE}</style>
      <div className="no-print flex flex-wrap items-end justify-between gap-3">
        <PeriodPicker period={period} site={site ?? ''} sites={overview.sites} />
        <PrintButton />
      </div>
      {asked && !asked.success ? (
        <div className="no-print">
          <ErrorNote>That period could not be read; showing the last whole quarter.</ErrorNote>
        </div>
      ) : null}
      <PeriodReportView report={report} />
      {roleAtLeast(actor.role, 'lead') ? <ScheduleManager sites={overview.sites} /> : null}
    </section>
  );
}
