import { AuditLog } from '@/components/admin/AuditLog';
import { requireRole } from '@/lib/auth/guard';
import { fetchAuditPage } from '@/lib/audit/log';

export const metadata = { title: 'Audit log' };

export default async function AdminAuditPage() {
  await requireRole('admin');
  const first = await fetchAuditPage({ page: 1, pageSize: 50 });
  return (
    <section className="space-y-3">
      <h1 className="text-xl font-semibold">Audit log</h1>
      <AuditLog initial={first} />
    </section>
  );
}
