import Link from 'next/link';
import { requireRole } from '@/lib/auth/guard';
import { listSeries } from '@/lib/series/registry';

export const metadata = { title: 'Overview' };

export default async function OverviewPage() {
  await requireRole('viewer');
  const series = await listSeries();
  return (
    <section>
      <h1 className="text-xl font-semibold">Overview</h1>
      {series.length === 0 ? (
        <p className="mt-4 text-ink-soft">No series are registered yet.</p>
      ) : (
        <ul className="mt-4 divide-y divide-rule rounded border border-rule bg-card" data-testid="series-list">
          {series.map((s) => (
            <li key={s.id} className="px-4 py-3">
              <Link href={`/series/${s.slug}`} className="font-medium text-tide hover:underline">{s.name}</Link>
              <span className="ml-2 text-sm text-ink-soft">{s.site}</span>
            </li>
          ))}
        </ul>
      )}
    </section>
  );
}
