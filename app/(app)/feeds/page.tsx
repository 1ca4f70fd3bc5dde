import { requireRole } from '@/lib/auth/guard';
import { roleAtLeast } from '@/lib/auth/roles';
import { listFeeds, presentFeed } from '@/lib/feeds/registry';
import { FeedsScreen } from '@/components/feeds/FeedsScreen';

export const metadata = { title: 'Station feeds' };

export default async function FeedsPage() {
  const actor = await requireRole('viewer');
  const feeds = (await listFeeds()).map(presentFeed);
  return (
    <section className="space-y-4">
      <h1 className="text-xl font-semibold">Station feeds</h1>
      <p className="text-sm text-ink-soft">
        A feed takes a station file with many variables and their quality flags into several series at once, whole or not at all.
      </p>
      <FeedsScreen initial={feeds} canCreate={roleAtLeast(actor.role, 'lead')} />
    </section>
  );
}
