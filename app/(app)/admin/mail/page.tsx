import { MailAdmin } from '@/components/admin/MailAdmin';
import { requireRole } from '@/lib/auth/guard';

export const metadata = { title: 'Mail' };

export default async function AdminMailPage() {
  await requireRole('admin');
  return (
    <section className="space-y-3">
      <h1 className="text-xl font-semibold">Mail</h1>
      <MailAdmin />
    </section>
  );
}
