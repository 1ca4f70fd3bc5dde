import Link from 'next/link';
import { BacktestPanel } from '@/components/backtest/BacktestPanel';
import { RulesPanel } from '@/components/rules/RulesPanel';
import { WhoHears } from '@/components/rules/WhoHears';
import { EvidenceTable } from '@/components/workbench/EvidenceTable';
import { RULE_TEMPLATES } from '@/lib/alerts/rule-templates';
import { evidenceRows } from '@/lib/series/evidence';
import { readPreferences } from '@/lib/users/preferences';
import { ruleStatuses } from '@/lib/alerts/rules';
import { Caution } from '@/components/Caution';
import { LocalTime } from '@/components/LocalTime';
import { ErrorNote } from '@/components/States';
import { QualityPanel } from '@/components/workbench/QualityPanel';
import { QcSettings } from '@/components/quality/QcSettings';
import { DataVersionsPanel } from '@/components/workbench/DataVersionsPanel';
import type { QcConfig } from '@/lib/schemas/quality';
import { Workbench } from '@/components/workbench/Workbench';
import { requireRole } from '@/lib/auth/guard';
import { fetchWorkbench } from '@/lib/series/workbench';
import { roleAtLeast } from '@/lib/auth/roles';
import { foundOr404 } from '@/lib/http/page';
import { Breadcrumb } from '@/components/ui/Breadcrumb';
import { siteOfSeries } from '@/lib/sites/page-data';

export const metadata = { title: 'Series' };

export default async function SeriesPage({ params }: { params: Promise<{ slug: string }> }) {
  const actor = await requireRole('viewer');
  const { slug } = await params;
  const bench = await foundOr404(() => fetchWorkbench(slug));
  const { series } = bench;
  const [statuses, preferences, site] = await Promise.all([ruleStatuses(series.id), readPreferences(actor), siteOfSeries(series.siteId)]);
  const canLead = roleAtLeast(actor.role, 'lead');
  return (
    <section className="space-y-4">
      <Breadcrumb trail={[{ href: '/', label: 'Overview' }]} here={series.name} />
      <header className="flex flex-wrap items-baseline gap-x-4 gap-y-1">
        <h1 className="text-xl font-semibold">{series.name}</h1>
        <span className="text-sm text-ink-soft">
          {site ? (
            <Link href={`/sites/${site.slug}`} className="hover:underline" data-testid="series-site">
              {site.name}
            </Link>
          ) : (
            series.site || 'No site'
          )}{' '}
          · {series.unit || 'no unit'} · times in {series.timeZone}
        </span>
        {bench.snapshot ? (
          <span className="text-sm text-ink-soft">
            analysed <LocalTime t={bench.snapshot.createdAt} timeZone={series.timeZone} />
          </span>
        ) : null}
        {roleAtLeast(actor.role, 'lead') ? (
          <Link href={`/series/${series.slug}/settings`} className="ml-auto text-sm text-tide hover:underline" data-testid="series-settings-link">
            Settings
          </Link>
        ) : null}
      </header>
      {series.description ? <p className="max-w-3xl text-sm text-ink-soft">{series.description}</p> : null}
      <Caution />
      {site?.openSiteAlerts ? (
        <p role="note" className="rounded-md border border-warning/40 bg-warning-light px-3 py-2 text-sm" data-testid="series-site-alert">
          {site.openSiteAlerts.count === 1 ? 'An alert is' : `${site.openSiteAlerts.count} alerts are`} open on the indicators across the series of{' '}
          <Link href={`/sites/${site.slug}#site-rules`} className="font-medium text-tide hover:underline">
            {site.name}
          </Link>
          , the site of this series.
        </p>
      ) : null}
      {bench.snapshot?.status === 'error' ? (
        <ErrorNote>The latest analysis run failed: {bench.snapshot.error}. The charts show the last successful one.</ErrorNote>
      ) : null}
      <EvidenceTable rows={evidenceRows(bench.view, statuses)} />
      <Workbench
        series={{ slug: series.slug, name: series.name, unit: series.unit, timeZone: series.timeZone }}
        savedSettings={bench.savedSettings}
        initialView={bench.view}
        canTune={roleAtLeast(actor.role, 'analyst')}
        canSave={canLead}
        charts={preferences.seriesCharts}
        marks={bench.marks}
        history={bench.history}
        quality={
          <QualityPanel
            quality={bench.view?.quality ?? null}
            stretch={bench.view?.stretch ?? null}
            shifts={bench.view?.shifts ?? []}
            runs={bench.runs}
            rejectedRows={bench.rejectedRows}
            extent={bench.extent}
            timeZone={series.timeZone}
          />
        }
      />
      <RulesPanel
        slug={series.slug}
        statuses={statuses}
        timeZone={series.timeZone}
        canEdit={canLead}
        indicators={bench.savedSettings.indicators}
        templates={RULE_TEMPLATES}
      />
      {canLead ? <WhoHears slug={series.slug} /> : null}
      <QcSettings slug={series.slug} initial={series.qc as QcConfig | null} canEdit={canLead} />
      <DataVersionsPanel slug={series.slug} timeZone={series.timeZone} canReanalyse={canLead} />
      <BacktestPanel slug={series.slug} timeZone={series.timeZone} canRun={canLead} />
    </section>
  );
}
