import { Caution } from '@/components/Caution';
import { OverviewTable } from '@/components/overview/OverviewTable';
import { QueueCounts } from '@/components/overview/QueueCounts';
import { SiteAlerts } from '@/components/overview/SiteAlerts';
import Link from 'next/link';
import { requireRole } from '@/lib/auth/guard';
import { roleAtLeast } from '@/lib/auth/roles';
import { buttonClass } from '@/components/ui/Button';
import { fetchSeriesOverview } from '@/lib/overview';

export const metadata = { title: 'Overview' };

export default async function OverviewPage() {
  const actor = await requireRole('viewer');
  const overview = await fetchSeriesOverview(actor.id);
  return (
    <section className="space-y-5">
      <div className="flex flex-wrap items-baseline gap-3">
        <h1 className="text-xl font-semibold">Overview</h1>
        <p className="text-sm text-ink-soft">
          {overview.rows.length} series · {overview.queues.open} open alerts
        </p>
        {roleAtLeast(actor.role, 'lead') ? (
          <Link href="/series/new" className={buttonClass('secondary', 'sm', 'ml-auto')}>
            Register a series
          </Link>
        ) : null}
      </div>
      <Caution />
      <QueueCounts counts={overview.queues} />
      <SiteAlerts groups={overview.siteAlerts} />
      <OverviewTable rows={overview.rows} sites={overview.sites} siteAlerts={overview.siteAlerts} now={overview.generatedAt} />
    </section>
  );
}
