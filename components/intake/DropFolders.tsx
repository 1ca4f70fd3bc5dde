'use client';

import Link from 'next/link';
import { useQuery } from '@tanstack/react-query';
import { api } from '@/components/api';

interface Folder {
  slug: string;
  known: boolean;
  pending: string[];
  rejected: { file: string; runId: number | null; message: string; rejected: number }[];
}

export function DropFolders() {
  const query = useQuery({ queryKey: ['drop-folders'], queryFn: () => api<{ items: Folder[] }>('/api/drop-folders'), refetchInterval: 15_000 });
  return (
    <section aria-labelledby="drops-title" className="space-y-3">
      <h2 id="drops-title" className="text-lg font-semibold">
        Drop folders
      </h2>
      {query.isPending && (
        <p className="text-sm text-ink-soft" role="status">
          Loading drop folders…
        </p>
      )}
      {query.isError && (
        <p className="text-sm text-warning" role="alert">
          Could not read the drop folders: {query.error.message}
        </p>
      )}
      {query.data && query.data.items.length === 0 && (
        <p className="text-sm text-ink-soft">
          No drop folders yet. Create a folder named after a series slug under the drop directory and put CSV files in it.
        </p>
      )}
      <ul className="space-y-2">
        {query.data?.items.map((folder) => (
          <li key={folder.slug} className="rounded border border-rule bg-card p-3 text-sm" data-testid={`drop-folder-${folder.slug}`}>
            <p className="font-mono font-medium">{folder.slug}/</p>
            {!folder.known && (
              <p className="mt-1 text-warning">
                No series has this slug, so its files are left alone. Rename the folder or{' '}
                <Link href="/series/new" className="underline">
                  register the series
                </Link>
                .
              </p>
            )}
            {folder.pending.length > 0 && <p className="mt-1 text-ink-soft">Waiting: {folder.pending.join(', ')}</p>}
            {folder.rejected.length > 0 && (
              <div className="mt-2">
                <p className="font-medium">Rejected files</p>
                <ul className="mt-1 list-disc pl-5">
                  {folder.rejected.map((r) => (
                    <li key={r.file}>
                      <span className="font-mono">{r.file}</span>
                      {r.runId !== null && <> (run #{r.runId})</>}: {r.message}
                    </li>
                  ))}
                </ul>
              </div>
            )}
            {folder.known && folder.pending.length === 0 && folder.rejected.length === 0 && (
              <p className="mt-1 text-ink-soft">Nothing waiting, nothing rejected.</p>
            )}
          </li>
        ))}
      </ul>
    </section>
  );
}
