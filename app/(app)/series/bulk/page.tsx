import { BulkRegistration } from '@/components/series-forms/BulkRegistration';
import { RoleNeeded } from '@/components/series-forms/RoleNeeded';
import { requireRole } from '@/lib/auth/guard';
import { roleAtLeast } from '@/lib/auth/roles';
import { Breadcrumb } from '@/components/ui/Breadcrumb';

export const metadata = { title: 'Register series from a list' };

export default async function BulkRegistrationPage() {
  const actor = await requireRole('viewer');
  if (!roleAtLeast(actor.role, 'lead')) return <RoleNeeded role="lead" what="Registering series" />;
  return (
    <section className="max-w-5xl space-y-4">
      <Breadcrumb
        trail={[
          { href: '/', label: 'Overview' },
          { href: '/series/new', label: 'Register a series' },
        ]}
        here="From a list"
      />
      <h1 className="text-xl font-semibold">Register series from a list</h1>
      <p className="text-sm text-ink-soft">The list is checked first; the series are registered only when every row is right, all together or none.</p>
      <BulkRegistration />
    </section>
  );
}
