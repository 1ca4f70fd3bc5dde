'use client';

import { keepPreviousData, useQuery } from '@tanstack/react-query';
import { useState } from 'react';
import { api } from '@/components/api';
import { LocalTime } from '@/components/LocalTime';
import { Empty, ErrorNote, Loading } from '@/components/States';
import { CELL_TIGHT, DataTable } from '@/components/ui/DataTable';
import { CONTROL, Field } from '@/components/ui/Field';
import { Pager, pageCount } from '@/components/ui/Pager';

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
  const pages = pageCount(query.data?.total ?? 0, PAGE_SIZE);
  return (
    <div className="space-y-3">
      <Field label="Action (exact, e.g. alert.confirm)" tone="filter" className="w-fit">
        <input
          value={action}
          onChange={(e) => {
            setAction(e.target.value.trim());
            setPage(1);
          }}
          className={CONTROL}
        />
      </Field>
      {query.isError ? (
        <ErrorNote error={query.error} />
      ) : !query.data ? (
        <Loading />
      ) : query.data.items.length === 0 ? (
        <Empty>No entries.</Empty>
      ) : (
        <DataTable caption="Audit log" className="min-w-[640px]" columns={['When', 'Who', 'Action', 'On', 'Details']}>
          {query.data.items.map((e) => (
            <tr key={e.id}>
              <td className={CELL_TIGHT}>
                <LocalTime t={e.at} timeZone="UTC" withZone />
              </td>
              <td className={CELL_TIGHT}>{e.actor?.name ?? 'system'}</td>
              <td className={`${CELL_TIGHT} font-mono text-xs`}>{e.action}</td>
              <td className={CELL_TIGHT}>
                {e.entity}
                {e.entityId ? ` #${e.entityId}` : ''}
              </td>
              <td className={`${CELL_TIGHT} max-w-xs truncate font-mono text-xs`} title={JSON.stringify(e.details)}>
                {JSON.stringify(e.details)}
              </td>
            </tr>
          ))}
        </DataTable>
      )}
      <Pager label="Pages" page={page} pages={pages} onPage={setPage} previous="← Newer" next="Older →" />
    </div>
  );
}
