'use client';

import { useQuery } from '@tanstack/react-query';
import { api } from '@/components/api';
import { DataTable, CELL } from '@/components/ui/DataTable';
import type { FeedRecord } from '@/lib/feeds/registry';
import { FeedForm } from './FeedForm';

/** The station feeds: each with its drop folder and column map; leads add one from a sample file. */
export function FeedsScreen({ initial, canCreate }: { initial: FeedRecord[]; canCreate: boolean }) {
  const feeds = useQuery({ queryKey: ['feeds'], queryFn: () => api<{ feeds: FeedRecord[] }>('/api/feeds'), initialData: { feeds: initial } });
  return (
    <div className="space-y-6">
      {feeds.isError ? (
        <p className="text-sm text-warning" role="alert">
          The feeds could not be loaded just now.
        </p>
      ) : null}
      {feeds.isFetching && !feeds.data ? (
        <p className="text-sm text-ink-soft" role="status">
          Loading feeds…
        </p>
      ) : null}
      {feeds.data && feeds.data.feeds.length === 0 ? (
        <p className="text-sm text-ink-soft" data-testid="feeds-empty">
          No station feed yet. {canCreate ? 'Add one below from a sample file.' : 'A lead adds them.'}
        </p>
      ) : null}
      {feeds.data && feeds.data.feeds.length > 0 ? (
        <DataTable caption="Station feeds" columns={['Feed', 'Drop folder', 'Time column', 'Columns → series (flag column)']} testId="feeds-table">
          {feeds.data.feeds.map((feed) => (
            <tr key={feed.slug} className="border-b border-rule last:border-0">
              <td className={CELL}>
                {feed.name}
                <div className="text-xs text-ink-soft">{feed.slug}</div>
              </td>
              <td className={`${CELL} font-mono text-xs`}>DROP_DIR/{feed.dropFolder}/</td>
              <td className={CELL}>{feed.timeColumn}</td>
              <td className={CELL}>
                {Object.entries(feed.columns).map(([column, slug]) => (
                  <div key={column}>
                    {column} → {slug}
                    {feed.flagColumns[column] ? ` (${feed.flagColumns[column]})` : ''}
                  </div>
                ))}
                {feed.maintenanceColumn ? <div className="text-xs text-ink-soft">maintenance visits from {feed.maintenanceColumn}</div> : null}
              </td>
            </tr>
          ))}
        </DataTable>
      ) : null}
      {canCreate ? <FeedForm /> : null}
    </div>
  );
}
