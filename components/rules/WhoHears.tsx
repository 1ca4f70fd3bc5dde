'use client';

import { useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import { api } from '@/components/api';
import { Empty, ErrorNote, Loading, Panel } from '@/components/States';
import { CONTROL_BARE } from '@/components/ui/Field';
import { CELL, DataTable } from '@/components/ui/DataTable';
import type { SeriesWatcher } from '@/lib/mail/watches';
import type { WatchMode } from '@/models/Watch';

const MODE_WORDS: Record<WatchMode, string> = { immediate: 'at once, one e-mail per alert', digest: 'in the daily digest', none: 'not notified' };

/**
 * Who hears of this series' alerts (lead): every active user with how they are notified, changed here one person
 * at a time (each change audited). People still change their own choice on their account page.
 */
export function WhoHears({ slug }: { slug: string }) {
  const client = useQueryClient();
  const key = ['watchers', slug];
  const list = useQuery({ queryKey: key, queryFn: () => api<{ items: SeriesWatcher[] }>(`/api/series/${slug}/watchers`) });
  const set = useMutation({
    mutationFn: (change: { userId: number; mode: WatchMode }) =>
      api<{ items: SeriesWatcher[] }>(`/api/series/${slug}/watchers`, { method: 'PUT', body: { watchers: [change] } }),
    onSuccess: (data) => client.setQueryData(key, data),
  });
  const hearing = list.data?.items.filter((w) => w.mode !== 'none').length ?? 0;
  return (
    <Panel title="Who hears" id="who-hears">
      <p className="mb-3 text-sm text-ink-soft">
        Who is e-mailed when an alert of this series opens. {list.data ? `${hearing} of ${list.data.items.length} people hear of it.` : ''}
      </p>
      {list.isLoading ? (
        <Loading label="Loading people…" />
      ) : list.error ? (
        <ErrorNote error={list.error} />
      ) : !list.data?.items.length ? (
        <Empty>No active users yet.</Empty>
      ) : (
        <DataTable caption="Who hears of this series' alerts" testId="who-hears" frame="plain" columns={['Person', 'Role', 'Hears']}>
          {list.data.items.map((w) => (
            <tr key={w.userId} className="border-b border-rule last:border-0" data-user={w.userId}>
              <td className={CELL}>
                {w.name} <span className="text-xs text-ink-soft">{w.email}</span>
              </td>
              <td className={CELL}>{w.role}</td>
              <td className={CELL}>
                <select
                  className={CONTROL_BARE}
                  aria-label={`How ${w.name} hears`}
                  value={w.mode}
                  disabled={set.isPending}
                  onChange={(e) => set.mutate({ userId: w.userId, mode: e.target.value as WatchMode })}
                >
                  {(Object.keys(MODE_WORDS) as WatchMode[]).map((m) => (
                    <option key={m} value={m}>
                      {MODE_WORDS[m]}
                    </option>
                  ))}
                </select>
              </td>
            </tr>
          ))}
        </DataTable>
      )}
      {set.error ? <ErrorNote error={set.error}>Not changed.</ErrorNote> : null}
    </Panel>
  );
}
