import { Caution } from '@/components/Caution';
import { AlertQueue, type QueueFilters } from '@/components/alerts/AlertQueue';
import { requireRole } from '@/lib/auth/guard';
import { fetchAlertQueue } from '@/lib/alerts/queries';
import { alertQueueSchema } from '@/lib/schemas/alert';
import { findSeriesChoice } from '@/lib/series/registry';
import { listSites } from '@/lib/sites/registry';

export const metadata = { title: 'Alerts' };

export default async function AlertsPage({ searchParams }: { searchParams: Promise<Record<string, string | string[] | undefined>> }) {
  const actor = await requireRole('viewer');
  const raw = Object.fromEntries(Object.entries(await searchParams).map(([k, v]) => [k, Array.isArray(v) ? v[0] : v]));
  const parsed = alertQueueSchema.safeParse({ ...raw, pageSize: 25 });
  const query = parsed.success && parsed.data.queue !== 'all' ? parsed.data : alertQueueSchema.parse({ pageSize: 25 });
  const [page, series, sites] = await Promise.all([fetchAlertQueue(query, actor), query.series ? findSeriesChoice(query.series) : null, listSites()]);
  const filters: QueueFilters = {
    queue: query.queue as QueueFilters['queue'],
    series: query.series ?? '',
    site: query.site ?? '',
    severity: query.severity ?? '',
    kind: query.kind ?? '',
    age: query.age ?? '',
    sort: query.sort,
    page: query.page,
  };
  return (
    <section className="space-y-4">
      <h1 className="text-xl font-semibold">Alerts</h1>
      <Caution />
      <AlertQueue
        initialFilters={filters}
        initialPage={page}
        initialSeries={query.series ? (series ?? { slug: query.series, name: query.series }) : null}
        sites={sites.map((s) => ({ slug: s.slug, name: s.name }))}
      />
    </section>
  );
}
