import { TokensAdmin } from '@/components/admin/TokensAdmin';
import { requireRole } from '@/lib/auth/guard';
import { hasActiveSeries } from '@/lib/series/registry';

export const metadata = { title: 'Ingest tokens' };

export default async function AdminTokensPage() {
  await requireRole('admin');
  const hasSeries = await hasActiveSeries();
  return (
    <section className="space-y-3">
      <h1 className="text-xl font-semibold">Ingest tokens</h1>
      <p className="text-sm text-ink-soft">A token lets one logger or script push observations to one series. Revoke it when the device is retired.</p>
      <TokensAdmin hasSeries={hasSeries} />
    </section>
  );
}
