import { Panel } from '@/components/States';
import { RetireControl } from '@/components/series-forms/RetireControl';
import { RoleNeeded } from '@/components/series-forms/RoleNeeded';
import { SeriesForm } from '@/components/series-forms/SeriesForm';
import { requireRole } from '@/lib/auth/guard';
import { roleAtLeast } from '@/lib/auth/roles';
import { foundOr404 } from '@/lib/http/page';
import { findSeriesBySlug, presentSeries } from '@/lib/series/registry';
import { listSites } from '@/lib/sites/registry';
import { Breadcrumb } from '@/components/ui/Breadcrumb';

export const metadata = { title: 'Series settings' };

export default async function SeriesSettingsPage({ params }: { params: Promise<{ slug: string }> }) {
  const actor = await requireRole('viewer');
  const { slug } = await params;
  const series = presentSeries(await foundOr404(() => findSeriesBySlug(slug)));
  if (!roleAtLeast(actor.role, 'lead')) return <RoleNeeded role="lead" what="Changing a series" />;
  const sites = await listSites();
  return (
    <section className="max-w-4xl space-y-4">
      <Breadcrumb
        trail={[
          { href: '/', label: 'Overview' },
          { href: `/series/${series.slug}`, label: series.name },
        ]}
        here="Settings"
      />
      <h1 className="text-xl font-semibold">
        Settings of {series.name}
        {series.retired ? ' (retired)' : ''}
      </h1>
      <SeriesForm sites={sites} series={series} />
      <Panel title={series.retired ? 'Restore' : 'Retire'} id="retire">
        <RetireControl slug={series.slug} retired={series.retired} />
      </Panel>
    </section>
  );
}
