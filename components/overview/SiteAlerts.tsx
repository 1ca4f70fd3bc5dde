import Link from 'next/link';
import { SeverityBadge } from '@/components/Badges';
import type { SiteAlertGroup } from '@/lib/overview';

/**
 * Sites whose series move together in a way a site rule flags: open alerts on the site-level indicators, which no
 * single series row shows. Each links to the site page, where the rule, its evidence and the alert are. Nothing is
 * shown while no site alert is open (the queue counts above already say how many alerts are open in all).
 */
export function SiteAlerts({ groups }: { groups: SiteAlertGroup[] }) {
  if (!groups.length) return null;
  return (
    <section aria-labelledby="site-alerts-title" className="rounded-lg border border-rule bg-card px-4 py-3 shadow-sm" data-testid="overview-site-alerts">
      <h2 id="site-alerts-title" className="text-sm font-semibold">
        Open alerts across a site&apos;s series
      </h2>
      <ul className="mt-2 space-y-1 text-sm">
        {groups.map((g) => (
          <li key={g.siteSlug} className="flex items-center gap-2" data-site={g.siteSlug}>
            <SeverityBadge severity={g.severity} />
            <Link href={`/sites/${g.siteSlug}#site-indicators`} className="font-medium text-tide hover:underline">
              {g.site}
            </Link>
            <span className="text-ink-soft">
              {g.count} open {g.count === 1 ? 'alert' : 'alerts'} on the site-level indicators
            </span>
          </li>
        ))}
      </ul>
    </section>
  );
}
