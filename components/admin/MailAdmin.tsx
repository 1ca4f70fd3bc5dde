'use client';

import { useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import { useState } from 'react';
import { api } from '@/components/api';
import { LocalTime } from '@/components/LocalTime';
import { Empty, ErrorNote, Loading, Panel } from '@/components/States';
import { Button } from '@/components/ui/Button';
import { CELL_TIGHT, DataTable } from '@/components/ui/DataTable';

interface OutboxRow {
  id: number;
  kind: string;
  to: string;
  subject: string;
  status: string;
  attempts: number;
  lastError: string | null;
  sentAt: string | null;
  createdAt: string;
}
interface MailboxRow {
  id: string;
  receivedAt: string;
  from: string;
  to: string[];
  subject: string;
  text: string;
}

const STATUS: Record<string, string> = { pending: '… waiting', sent: '✓ sent', failed: '✕ failed', sending: '↗ sending' };

/** The outbox (with retry for failed messages) and, without a real SMTP server, the local mailbox. */
export function MailAdmin() {
  const client = useQueryClient();
  const outbox = useQuery({
    queryKey: ['outbox'],
    queryFn: () => api<{ items: OutboxRow[]; total: number; counts: Record<string, number> }>('/api/admin/outbox?pageSize=50'),
  });
  const mailbox = useQuery({ queryKey: ['mailbox'], queryFn: () => api<{ items: MailboxRow[]; smtpConfigured: boolean }>('/api/admin/mailbox') });
  const retry = useMutation({
    mutationFn: (id: number) => api(`/api/admin/outbox/${id}/retry`, { method: 'POST' }),
    onSuccess: () => client.invalidateQueries({ queryKey: ['outbox'] }),
  });
  const [openId, setOpenId] = useState<string | null>(null);
  return (
    <div className="space-y-4">
      <Panel title="Outbox" id="outbox">
        {outbox.isPending ? (
          <Loading />
        ) : outbox.isError ? (
          <ErrorNote error={outbox.error} />
        ) : outbox.data.items.length === 0 ? (
          <Empty>Nothing has been queued for sending.</Empty>
        ) : (
          <>
            <p className="mb-2 text-sm text-ink-soft">
              {Object.entries(outbox.data.counts)
                .map(([k, v]) => `${v} ${k}`)
                .join(' · ')}
            </p>
            <DataTable
              caption="Queued and sent mail"
              frame="plain"
              className="min-w-[640px]"
              columns={['Queued', 'To', 'Subject', 'Status', { label: 'Retry', srOnly: true }]}
            >
              {outbox.data.items.map((m) => (
                <tr key={m.id}>
                  <td className={CELL_TIGHT}>
                    <LocalTime t={m.createdAt} timeZone="UTC" withZone />
                  </td>
                  <td className={CELL_TIGHT}>{m.to}</td>
                  <td className={CELL_TIGHT}>{m.subject}</td>
                  <td className={CELL_TIGHT} title={m.lastError ?? undefined}>
                    {STATUS[m.status] ?? m.status}
                    {m.attempts > 1 ? ` (${m.attempts} tries)` : ''}
                  </td>
                  <td className={`${CELL_TIGHT} text-right`}>
                    {m.status === 'failed' ? (
                      <Button size="sm" onClick={() => retry.mutate(m.id)}>
                        Retry
                      </Button>
                    ) : null}
                  </td>
                </tr>
              ))}
            </DataTable>
          </>
        )}
        {retry.isError ? <ErrorNote error={retry.error}>Not retried.</ErrorNote> : null}
      </Panel>
      <Panel title="Local mailbox" id="mailbox">
        {mailbox.isPending ? (
          <Loading />
        ) : mailbox.isError ? (
          <ErrorNote error={mailbox.error} />
        ) : mailbox.data.smtpConfigured ? (
          <Empty>Mail goes to the configured SMTP server; there is no local mailbox.</Empty>
        ) : mailbox.data.items.length === 0 ? (
          <Empty>No mail has arrived in the local mailbox.</Empty>
        ) : (
          <ul className="divide-y divide-rule text-sm">
            {mailbox.data.items.map((m) => (
              <li key={m.id} className="py-2">
                <button
                  type="button"
                  aria-expanded={openId === m.id}
                  onClick={() => setOpenId(openId === m.id ? null : m.id)}
                  className="flex w-full flex-wrap gap-x-3 text-left"
                >
                  <LocalTime t={m.receivedAt} timeZone="UTC" withZone />
                  <span className="font-medium">{m.subject}</span>
                  <span className="text-ink-soft">to {m.to.join(', ')}</span>
                </button>
                {openId === m.id ? <pre className="mt-2 max-h-80 overflow-auto whitespace-pre-wrap rounded bg-paper p-2 text-xs">{m.text}</pre> : null}
              </li>
            ))}
          </ul>
        )}
      </Panel>
    </div>
  );
}
