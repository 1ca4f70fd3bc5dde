'use client';

import { useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import { Fragment, useState } from 'react';
import { api } from '@/components/api';
import { LocalTime } from '@/components/LocalTime';
import { Empty, ErrorNote, Loading } from '@/components/States';
import { Button } from '@/components/ui/Button';
import { CELL_TIGHT, DataTable } from '@/components/ui/DataTable';
import { Pager, pageCount } from '@/components/ui/Pager';
import type { WebhookDeliveryRecord } from '@/lib/webhooks/admin';

const PAGE_SIZE = 25;
const STATUS: Record<string, string> = { pending: '… waiting', sending: '↗ sending', delivered: '✓ received', failed: '✕ failed' };

/** One endpoint's deliveries with every attempt and the body as sent; a failed one can be sent again. */
export function WebhookDeliveries({ endpointId }: { endpointId: number }) {
  const client = useQueryClient();
  const [page, setPage] = useState(1);
  const [openId, setOpenId] = useState<number | null>(null);
  const key = ['webhook-deliveries', endpointId, page];
  const deliveries = useQuery({
    queryKey: key,
    queryFn: () => api<{ items: WebhookDeliveryRecord[]; total: number }>(`/api/webhooks/${endpointId}/deliveries?page=${page}&pageSize=${PAGE_SIZE}`),
    refetchInterval: 15_000,
  });
  const retry = useMutation({
    mutationFn: (id: number) => api(`/api/webhooks/${endpointId}/deliveries/${id}/retry`, { method: 'POST' }),
    onSuccess: () =>
      Promise.all([client.invalidateQueries({ queryKey: ['webhook-deliveries', endpointId] }), client.invalidateQueries({ queryKey: ['webhooks'] })]),
  });
  if (deliveries.isPending) return <Loading label="Loading deliveries…" />;
  if (deliveries.isError) return <ErrorNote error={deliveries.error}>The deliveries could not be loaded.</ErrorNote>;
  if (deliveries.data.items.length === 0) return <Empty>Nothing has been queued for this endpoint yet.</Empty>;
  return (
    <div className="space-y-2" data-testid={`webhook-deliveries-${endpointId}`}>
      <DataTable
        caption="Deliveries to this endpoint"
        className="min-w-[720px]"
        columns={['Queued', 'Event', 'Status', 'Tries', 'Last answer', { label: 'Actions', srOnly: true }]}
      >
        {deliveries.data.items.map((d) => (
          <Fragment key={d.id}>
            <tr>
              <td className={CELL_TIGHT}>
                <LocalTime t={d.createdAt} timeZone="UTC" withZone />
              </td>
              <td className={`${CELL_TIGHT} font-mono text-xs`}>{d.event}</td>
              <td className={CELL_TIGHT}>
                {STATUS[d.status] ?? d.status}
                {d.status === 'pending' && d.attempts > 0 ? (
                  <>
                    {' '}
                    · next <LocalTime t={d.nextAttemptAt} timeZone="UTC" withZone />
                  </>
                ) : null}
              </td>
              <td className={`${CELL_TIGHT} num`}>{d.attempts}</td>
              <td className={`${CELL_TIGHT} max-w-xs truncate`} title={d.lastError ?? undefined}>
                {d.lastError ?? (d.lastStatus !== null ? `HTTP ${d.lastStatus}` : '—')}
              </td>
              <td className={`${CELL_TIGHT} whitespace-nowrap text-right`}>
                <Button size="sm" variant="quiet" aria-expanded={openId === d.id} onClick={() => setOpenId(openId === d.id ? null : d.id)}>
                  Attempts and body
                </Button>
                {d.status === 'failed' ? (
                  <Button size="sm" className="ml-2" disabled={retry.isPending} onClick={() => retry.mutate(d.id)}>
                    Retry
                  </Button>
                ) : null}
              </td>
            </tr>
            {openId === d.id ? (
              <tr>
                <td colSpan={6} className={CELL_TIGHT}>
                  {d.attemptLog.length === 0 ? (
                    <p className="text-sm text-ink-soft">Not tried yet.</p>
                  ) : (
                    <ol className="list-decimal space-y-0.5 pl-5 text-sm">
                      {d.attemptLog.map((a, i) => (
                        <li key={i}>
                          <LocalTime t={a.attemptedAt} timeZone="UTC" withZone /> · {a.durationMs} ms · {a.error ?? `HTTP ${a.statusCode}, received`}
                        </li>
                      ))}
                    </ol>
                  )}
                  <p className="mt-2 text-xs text-ink-soft">Idempotency-Key {d.idempotencyKey}</p>
                  <pre className="mt-1 max-h-64 overflow-auto whitespace-pre-wrap rounded bg-paper p-2 text-xs">{d.body}</pre>
                </td>
              </tr>
            ) : null}
          </Fragment>
        ))}
      </DataTable>
      {retry.isError ? <ErrorNote error={retry.error}>Not retried.</ErrorNote> : null}
      <Pager label="Delivery pages" page={page} pages={pageCount(deliveries.data.total, PAGE_SIZE)} onPage={setPage} previous="← Newer" next="Older →" />
    </div>
  );
}
