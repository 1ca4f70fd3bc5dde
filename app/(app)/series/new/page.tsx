import Link from 'next/link';
import { RoleNeeded } from '@/components/series-forms/RoleNeeded';
import { SeriesForm } from '@/components/series-forms/SeriesForm';
import { requireRole } from '@/lib/auth/guard';
import { roleAtLeast } from '@/lib/auth/roles';
import { listSites } from '@/lib/sites/registry';
import { Breadcrumb } from '@/components/ui/Breadcrumb';

export const metadata = { title: 'Register a series' };

export default async function NewSeriesPage({ searchParams }: { searchParams: Promise<{ site?: string }> }) {
  const actor = await requireRole('viewer');
  if (!roleAtLeast(actor.role, 'lead')) return <RoleNeeded role="lead" what="Registering a series" />;
  const [sites, { site }] = await Promise.all([listSites(), searchParams]);
  return (
    <section className="max-w-4xl space-y-4">
      <Breadcrumb trail={[{ href: '/', label: 'Overview' }]} here="Register a series" />
      <div className="flex flex-wrap items-baseline gap-3">
        <h1 className="text-xl font-semibold">Register a series</h1>
        <Link href="/series/bulk" className="text-sm text-tide hover:underline">
          Many at once from a list
        </Link>
      </div>
      <p className="text-sm text-ink-soft">
        After registering, drop CSV files into the series&apos; folder, upload one on the Intake screen, or push readings with an ingest token. The series
        starts with the default rules.
      </p>
      <SeriesForm sites={sites} initialSiteId={sites.find((s) => s.slug === site)?.id ?? null} />
    </section>
  );
}
