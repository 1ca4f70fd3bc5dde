import Link from 'next/link';
import { Empty } from '@/components/States';
import { CELL, DataTable } from '@/components/ui/DataTable';
import { formatCoordinates } from '@/lib/sites/map';
import type { SiteRecord } from '@/lib/schemas/site';

/** Every site with its position, zone and number of active series. */
export function SitesTable({ sites }: { sites: SiteRecord[] }) {
  if (sites.length === 0) return <Empty>No sites yet. A site is added here, or with the first series that names it.</Empty>;
  return (
    <DataTable caption="Sites" testId="sites-table" columns={['Site', 'Position', 'Time zone', 'Active series']}>
      {sites.map((site) => (
        <tr key={site.id} data-site={site.slug}>
          <td className={CELL}>
            <Link href={`/sites/${site.slug}`} className="font-medium text-tide hover:underline">
              {site.name}
            </Link>
            {site.description ? <div className="text-xs text-ink-soft">{site.description}</div> : null}
          </td>
          <td className={`${CELL} num`}>{formatCoordinates(site.latitude, site.longitude)}</td>
          <td className={CELL}>{site.timeZone}</td>
          <td className={`${CELL} num`}>{site.seriesCount}</td>
        </tr>
      ))}
    </DataTable>
  );
}
