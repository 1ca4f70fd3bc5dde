import { Panel } from '@/components/States';
import { SiteForm } from '@/components/sites/SiteForm';
import { SiteMap } from '@/components/sites/SiteMap';
import { SitesTable } from '@/components/sites/SitesTable';
import { requireRole } from '@/lib/auth/guard';
import { roleAtLeast } from '@/lib/auth/roles';
import { siteMap } from '@/lib/sites/map';
import { listSites } from '@/lib/sites/registry';

export const metadata = { title: 'Sites' };

export default async function SitesPage() {
  const actor = await requireRole('viewer');
  const sites = await listSites();
  return (
    <section className="space-y-4">
      <div className="flex flex-wrap items-baseline gap-3">
        <h1 className="text-xl font-semibold">Sites</h1>
        <p className="text-sm text-ink-soft">
          {sites.length} sites · {sites.reduce((sum, site) => sum + site.seriesCount, 0)} active series
        </p>
      </div>
      <SiteMap map={siteMap(sites)} />
      <SitesTable sites={sites} />
      {roleAtLeast(actor.role, 'lead') ? (
        <Panel title="Add a site" id="add-site">
          <SiteForm />
        </Panel>
      ) : null}
    </section>
  );
}
