'use client';

import { keepPreviousData, useQuery } from '@tanstack/react-query';
import { useState } from 'react';
import { SeriesPicker } from '@/components/SeriesPicker';
import type { SeriesChoice } from '@/lib/series/registry';
import { api } from '@/components/api';
import { LocalTime } from '@/components/LocalTime';
import { formatCount, formatDuration } from './api';
import type { IngestRunRecord as RunSummary } from '@/lib/intake/run-record';
import { RunReport } from './RunReport';
import { StatusBadge } from './StatusBadge';
import { Button } from '@/components/ui/Button';
import { CELL_TIGHT, DataTable } from '@/components/ui/DataTable';
import { CONTROL, Field } from '@/components/ui/Field';
import { Pager, pageCount } from '@/components/ui/Pager';

const PAGE_SIZE = 20;

export function RunsTable() {
  const [series, setSeries] = useState<SeriesChoice | null>(null);
  const slug = series?.slug ?? '';
  const [status, setStatus] = useState('');
  const [page, setPage] = useState(1);
  const [open, setOpen] = useState<number | null>(null);
  const params = new URLSearchParams({ page: String(page), pageSize: String(PAGE_SIZE), ...(slug && { series: slug }), ...(status && { status }) });
  const query = useQuery({
    queryKey: ['ingest-runs', slug, status, page],
    queryFn: () => api<{ items: RunSummary[]; total: number }>(`/api/ingest-runs?${params}`),
    placeholderData: keepPreviousData,
    refetchInterval: 10_000,
  });
  const pages = pageCount(query.data?.total ?? 0, PAGE_SIZE);
  return (
    <section aria-labelledby="runs-title" className="space-y-3">
      <h2 id="runs-title" className="text-lg font-semibold">
        Ingest runs
      </h2>
      <div className="flex flex-wrap items-end gap-3 text-sm">
        <SeriesPicker
          label="Series"
          value={series}
          onChange={(choice) => {
            setSeries(choice);
            setPage(1);
          }}
        />
        <Field label="Status" tone="filter">
          <select
            value={status}
            onChange={(e) => {
              setStatus(e.target.value);
              setPage(1);
            }}
            className={CONTROL}
          >
            <option value="">Any status</option>
            {['succeeded', 'rejected', 'failed', 'running'].map((s) => (
              <option key={s} value={s}>
                {s}
              </option>
            ))}
          </select>
        </Field>
      </div>
      {query.isPending && (
        <p className="text-sm text-ink-soft" role="status">
          Loading runs…
        </p>
      )}
      {query.isError && (
        <p className="text-sm text-warning" role="alert">
          Could not load the runs: {query.error.message}
        </p>
      )}
      {query.data && query.data.items.length === 0 && (
        <p className="text-sm text-ink-soft">No ingest runs yet. Files dropped into a series folder, uploads and pushes appear here.</p>
      )}
      {query.data && query.data.items.length > 0 && (
        <DataTable
          caption="Ingest runs, newest first"
          testId="runs-table"
          className="text-left"
          columns={[
            'Run',
            'Started',
            'Series',
            'Source',
            'File',
            'Status',
            'Read',
            'Accepted',
            'Duplicates',
            'Rejected',
            'Duration',
            { label: 'Report', srOnly: true },
          ]}
        >
          {query.data.items.map((run) => (
            <tr key={run.id} className={open === run.id ? 'bg-tide-light/40' : undefined}>
              <td className={`${CELL_TIGHT} font-mono`}>#{run.id}</td>
              <td className={CELL_TIGHT}>
                <LocalTime t={run.startedAt} timeZone={run.series?.timeZone ?? 'UTC'} withZone />
              </td>
              <td className={CELL_TIGHT}>{run.series?.name ?? '—'}</td>
              <td className={CELL_TIGHT}>{run.source}</td>
              <td className={`${CELL_TIGHT} font-mono text-xs`}>{run.fileName ?? '—'}</td>
              <td className={CELL_TIGHT}>
                <StatusBadge status={run.status} alreadyApplied={run.alreadyApplied} />
              </td>
              <td className={`${CELL_TIGHT} font-mono`}>{formatCount(run.rowsRead)}</td>
              <td className={`${CELL_TIGHT} font-mono`}>{formatCount(run.accepted)}</td>
              <td className={`${CELL_TIGHT} font-mono`}>{formatCount(run.duplicates)}</td>
              <td className={`${CELL_TIGHT} font-mono`}>{formatCount(run.rejected)}</td>
              <td className={`${CELL_TIGHT} font-mono`}>{formatDuration(run.durationMs)}</td>
              <td className={CELL_TIGHT}>
                <Button variant="quiet" size="sm" onClick={() => setOpen(open === run.id ? null : run.id)} aria-expanded={open === run.id}>
                  {open === run.id ? 'Hide report' : 'Report'}
                  <span className="sr-only"> of run {run.id}</span>
                </Button>
              </td>
            </tr>
          ))}
        </DataTable>
      )}
      {pages > 1 && <Pager label="Run pages" page={page} pages={pages} onPage={setPage} previous="Newer" next="Older" />}
      {open !== null && <RunReport runId={open} onClose={() => setOpen(null)} />}
    </section>
  );
}
