import Link from 'next/link';
import { AlertStateBadge, SeverityBadge } from '@/components/Badges';
import { Caution } from '@/components/Caution';
import { LocalTime } from '@/components/LocalTime';
import { OverviewTable } from '@/components/overview/OverviewTable';
import { Empty, Panel } from '@/components/States';
import { SiteForm } from '@/components/sites/SiteForm';
import { SiteIndicators } from '@/components/sites/SiteIndicators';
import { SiteMap } from '@/components/sites/SiteMap';
import { SiteRules } from '@/components/sites/SiteRules';
import { buttonClass } from '@/components/ui/Button';
import { CELL, DataTable } from '@/components/ui/DataTable';
import { requireRole } from '@/lib/auth/guard';
import { roleAtLeast } from '@/lib/auth/roles';
import { ALERT_KIND_WORDS, indicatorLabel } from '@/lib/display/analysis-labels';
import { foundOr404 } from '@/lib/http/page';
import { formatCoordinates, siteMap } from '@/lib/sites/map';
import { fetchSiteAnalysis } from '@/lib/sites/analysis';
import { fetchSitePage } from '@/lib/sites/page-data';
import { Breadcrumb } from '@/components/ui/Breadcrumb';

export const metadata = { title: 'Site' };

export default async function SitePage({ params }: { params: Promise<{ slug: string }> }) {
  const actor = await requireRole('viewer');
  const { slug } = await params;
  const [{ site, series, openAlerts, generatedAt, siteRules }, siteAnalysis] = await foundOr404(() =>
    Promise.all([fetchSitePage(slug, actor.id), fetchSiteAnalysis(slug)]),
  );
  const canEdit = roleAtLeast(actor.role, 'lead');
  const placed = site.latitude !== null;
  return (
    <section className="space-y-4">
      <Breadcrumb trail={[{ href: '/sites', label: 'Sites' }]} here={site.name} />
      <header className="flex flex-wrap items-baseline gap-x-4 gap-y-1">
        <h1 className="text-xl font-semibold">{site.name}</h1>
        <span className="text-sm text-ink-soft">
          {formatCoordinates(site.latitude, site.longitude)} · times in {site.timeZone} · {series.length} active series
        </span>
        {canEdit ? (
          <Link href={`/series/new?site=${site.slug}`} className={buttonClass('secondary', 'sm', 'ml-auto')}>
            Register a series here
          </Link>
        ) : null}
      </header>
      {site.description ? <p className="max-w-3xl text-sm text-ink-soft">{site.description}</p> : null}
      {site.notes ? (
        <p className="max-w-3xl whitespace-pre-line text-sm">
          <span className="font-medium">Notes: </span>
          {site.notes}
        </p>
      ) : null}
      <Caution />
      <div className={`grid grid-cols-1 gap-4 ${placed || canEdit ? 'lg:grid-cols-[minmax(0,1fr)_360px]' : ''}`}>
        <div className="min-w-0 space-y-4">
          <Panel title="Series and their latest data" id="site-series">
            <OverviewTable rows={series} sites={[]} now={generatedAt} noSeries="No active series at this site." siteColumn={false} />
          </Panel>
          <Panel title="Indicators across the site's series" id="site-indicators">
            <SiteIndicators slug={site.slug} timeZone={site.timeZone} initial={siteAnalysis} />
          </Panel>
          <Panel title="Rules on the indicators across the site's series" id="site-rules">
            <SiteRules slug={site.slug} canEdit={canEdit} initial={siteRules} />
          </Panel>
          <Panel
            title="Open alerts"
            id="site-alerts"
            actions={
              <Link href={`/alerts?queue=closed&site=${site.slug}`} className="text-sm text-tide hover:underline" data-testid="site-alerts-closed">
                Decided alerts at this site
              </Link>
            }
          >
            {openAlerts.length === 0 ? (
              <Empty>No open alerts at this site.</Empty>
            ) : (
              <DataTable caption="Open alerts at this site" frame="plain" testId="site-alerts" columns={['Alert', 'Series', 'Severity', 'State', 'Opened']}>
                {openAlerts.map((alert) => (
                  <tr key={alert.id}>
                    <td className={CELL}>
                      <Link href={`/alerts/${alert.id}`} className="text-tide hover:underline">
                        #{alert.id} {alert.indicator ? indicatorLabel(alert.indicator) : ALERT_KIND_WORDS[alert.kind]}
                      </Link>
                    </td>
                    <td className={CELL}>
                      {alert.series ? (
                        <Link href={`/series/${alert.series.slug}`} className="hover:underline">
                          {alert.series.name}
                        </Link>
                      ) : (
                        'all series together'
                      )}
                    </td>
                    <td className={CELL}>
                      <SeverityBadge severity={alert.severity} />
                    </td>
                    <td className={CELL}>
                      <AlertStateBadge state={alert.state} />
                    </td>
                    <td className={CELL}>
                      <LocalTime t={alert.createdAt} timeZone={alert.series?.timeZone ?? site.timeZone} />
                    </td>
                  </tr>
                ))}
              </DataTable>
            )}
          </Panel>
        </div>
        {placed || canEdit ? (
          <div className="space-y-4">
            {placed ? <SiteMap map={siteMap([site], 360, 200)} /> : null}
            {canEdit ? (
              <Panel title="Edit the site" id="edit-site">
                <SiteForm site={site} />
              </Panel>
            ) : null}
          </div>
        ) : null}
      </div>
    </section>
  );
}
