import { WebhooksAdmin } from '@/components/admin/WebhooksAdmin';
import { requireRole } from '@/lib/auth/guard';

export const metadata = { title: 'Webhooks' };

export default async function AdminWebhooksPage() {
  await requireRole('admin');
  return (
    <section className="space-y-3">
      <h1 className="text-xl font-semibold">Webhooks</h1>
      <p className="text-sm text-ink-soft">
        Alerts and rejected intake reach other systems (a team chat, a ticket queue) as signed JSON posted to the addresses registered here. Deliveries wait in
        an outbox and are retried with growing pauses while a receiver is down; every attempt is listed.
      </p>
      <WebhooksAdmin />
    </section>
  );
}
