import { requireRole } from '@/lib/auth/guard';
import { hasActiveSeries } from '@/lib/series/registry';
import { roleAtLeast } from '@/lib/auth/roles';
import { IntakeScreen } from '@/components/intake/IntakeScreen';

export const metadata = { title: 'Intake' };

export default async function IntakePage() {
  const actor = await requireRole('viewer');
  const hasSeries = await hasActiveSeries();
  return (
    <section className="space-y-4">
      <h1 className="text-xl font-semibold">Data intake</h1>
      <p className="text-sm text-ink-soft">Every file dropped into a series folder, every upload and every push is recorded here with its counts and report.</p>
      <IntakeScreen hasSeries={hasSeries} canUpload={roleAtLeast(actor.role, 'lead')} />
    </section>
  );
}
