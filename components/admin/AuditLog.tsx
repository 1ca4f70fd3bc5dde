'use client';

import { keepPreviousData, useQuery } from '@tanstack/react-query';
import { useState } from 'react';
import { api } from '@/components/api';
import { LocalTime } from '@/components/LocalTime';
import { Empty, ErrorNote, Loading } from '@/components/States';

interface AuditRow {
  id: number;
  at: string;
  actor: { name: string; email: string } | null;
  action: string;
  entity: string;
  entityId: string | null;
  details: Record<string, unknown>;
}
interface AuditPageData {
  items: AuditRow[];
  total: number;
  page: number;
  pageSize: number;
}

const PAGE_SIZE = 50;

/** The audit log, newest first, 50 entries a page, filterable by action. */
export function AuditLog({ initial }: { initial: AuditPageData }) {
  const [page, setPage] = useState(1);
  const [action, setAction] = useState('');
  const search = new URLSearchParams({ page: String(page), pageSize: String(PAGE_SIZE), ...(action ? { action } : {}) }).toString();
  const query = useQuery({
    queryKey: ['audit', search],
    queryFn: () => api<AuditPageData>(`/api/audit?${search}`),
    initialData: page === 1 && !action ? initial : undefined,
    placeholderData: keepPreviousData,
  });
  const pages = query.data ? Math.max(1, Math.ceil(query.data.total / PAGE_SIZE)) : 1;
  return (
    <div className="space-y-3">
      <label className="flex w-fit flex-col text-xs font-medium text-ink-soft">Action (exact, e.g. alert.confirm)
        <input value={action} onChange={(e) => { setAction(e.target.value.trim()); setPage(1); }} className="mt-1 rounded border border-rule bg-card px-2 py-1.5 text-sm" />
      </label>
      {query.isError ? <ErrorNote error={query.error} /> : !query.data ? <Loading /> : query.data.items.length === 0 ? <Empty>No entries.</Empty> : (
        <div className="overflow-x-auto rounded-lg border border-rule bg-card">
          <table className="w-full min-w-[640px] text-sm">
            <caption className="sr-only">Audit log</caption>
            <thead className="border-b border-rule bg-paper text-left text-ink-soft"><tr><th scope="col" className="px-3 py-2">When</th><th scope="col" className="px-3 py-2">Who</th><th scope="col" className="px-3 py-2">Action</th><th scope="col" className="px-3 py-2">On</th><th scope="col" className="px-3 py-2">Details</th></tr></thead>
            <tbody className="divide-y divide-rule">
              {query.data.items.map((e) => (
                <tr key={e.id}>
                  <td className="px-3 py-1.5"><LocalTime t={e.at} timeZone="UTC" withZone /></td>
                  <td className="px-3 py-1.5">{e.actor?.name ?? 'system'}</td>
                  <td className="px-3 py-1.5 font-mono text-xs">{e.action}</td>
                  <td className="px-3 py-1.5">{e.entity}{e.entityId ? ` #${e.entityId}` : ''}</td>
                  <td className="max-w-xs truncate px-3 py-1.5 font-mono text-xs" title={JSON.stringify(e.details)}>{JSON.stringify(e.details)}</td>
                </tr>
              ))}
            </tbody>
          </table>
        </div>
      )}
      <nav aria-label="Pages" className="flex items-center gap-2 text-sm">
        <button type="button" disabled={page <= 1} onClick={() => setPage(page - 1)} className="rounded border border-rule px-3 py-1 disabled:opacity-50">← Newer</button>
        <span className="num">Page {page} of {pages}</span>
        <button type="button" disabled={page >= pages} onClick={() => setPage(page + 1)} className="rounded border border-rule px-3 py-1 disabled:opacity-50">Older →</button>
      </nav>
    </div>
  );
}
