'use client';

import { keepPreviousData, useQuery } from '@tanstack/react-query';
import { useState } from 'react';
import { SeriesPicker } from '@/components/SeriesPicker';
import type { SeriesChoice } from '@/lib/series/registry';
import { api } from '@/components/api';
import { formatCount, formatDuration } from './api';
import type { IngestRunRecord as RunSummary } from '@/lib/intake/run-record';
import { RunReport } from './RunReport';
import { StatusBadge } from './StatusBadge';

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
  const pages = Math.max(1, Math.ceil((query.data?.total ?? 0) / PAGE_SIZE));
  return (
    <section aria-labelledby="runs-title" className="space-y-3">
      <h2 id="runs-title" className="text-lg font-semibold">Ingest runs</h2>
      <div className="flex flex-wrap items-end gap-3 text-sm">
        <SeriesPicker label="Series" value={series} onChange={(choice) => { setSeries(choice); setPage(1); }} />
        <label className="flex flex-col text-xs font-medium text-ink-soft">Status
          <select value={status} onChange={(e) => { setStatus(e.target.value); setPage(1); }} className="mt-1 rounded border border-rule bg-card px-2 py-1.5 text-sm font-normal text-ink">
            <option value="">Any status</option>
            {['succeeded', 'rejected', 'failed', 'running'].map((s) => <option key={s} value={s}>{s}</option>)}
          </select>
        </label>
      </div>
      {query.isPending && <p className="text-sm text-ink-soft" role="status">Loading runs…</p>}
      {query.isError && <p className="text-sm text-warning" role="alert">Could not load the runs: {query.error.message}</p>}
      {query.data && query.data.items.length === 0 && <p className="text-sm text-ink-soft">No ingest runs yet. Files dropped into a series folder, uploads and pushes appear here.</p>}
      {query.data && query.data.items.length > 0 && (
        <div className="overflow-x-auto rounded border border-rule bg-card">
          <table className="w-full text-left text-sm" data-testid="runs-table">
            <caption className="sr-only">Ingest runs, newest first</caption>
            <thead className="bg-paper text-xs uppercase text-ink-soft">
              <tr>
                {['Run', 'Started', 'Series', 'Source', 'File', 'Status', 'Read', 'Accepted', 'Duplicates', 'Rejected', 'Duration', ''].map((h, i) => <th key={i} scope="col" className="px-3 py-2">{h}</th>)}
              </tr>
            </thead>
            <tbody className="divide-y divide-rule">
              {query.data.items.map((run) => (
                <tr key={run.id} className={open === run.id ? 'bg-tide-light/40' : undefined}>
                  <td className="px-3 py-1.5 font-mono">#{run.id}</td>
                  <td className="px-3 py-1.5 whitespace-nowrap">{new Date(run.startedAt).toLocaleString('en-GB')}</td>
                  <td className="px-3 py-1.5">{run.series?.name ?? '—'}</td>
                  <td className="px-3 py-1.5">{run.source}</td>
                  <td className="px-3 py-1.5 font-mono text-xs">{run.fileName ?? '—'}</td>
                  <td className="px-3 py-1.5"><StatusBadge status={run.status} alreadyApplied={run.alreadyApplied} /></td>
                  <td className="px-3 py-1.5 font-mono">{formatCount(run.rowsRead)}</td>
                  <td className="px-3 py-1.5 font-mono">{formatCount(run.accepted)}</td>
                  <td className="px-3 py-1.5 font-mono">{formatCount(run.duplicates)}</td>
                  <td className="px-3 py-1.5 font-mono">{formatCount(run.rejected)}</td>
                  <td className="px-3 py-1.5 font-mono">{formatDuration(run.durationMs)}</td>
                  <td className="px-3 py-1.5">
                    <button type="button" onClick={() => setOpen(open === run.id ? null : run.id)} aria-expanded={open === run.id} className="rounded px-2 py-1 text-tide hover:underline">
                      {open === run.id ? 'Hide report' : 'Report'}<span className="sr-only"> of run {run.id}</span>
                    </button>
                  </td>
                </tr>
              ))}
            </tbody>
          </table>
        </div>
      )}
      {pages > 1 && (
        <nav aria-label="Run pages" className="flex items-center gap-2 text-sm">
          <button type="button" disabled={page <= 1} onClick={() => setPage(page - 1)} className="rounded border border-rule px-2 py-1 disabled:opacity-50">Newer</button>
          <span>Page {page} of {pages}</span>
          <button type="button" disabled={page >= pages} onClick={() => setPage(page + 1)} className="rounded border border-rule px-2 py-1 disabled:opacity-50">Older</button>
        </nav>
      )}
      {open !== null && <RunReport runId={open} onClose={() => setOpen(null)} />}
    </section>
  );
}
