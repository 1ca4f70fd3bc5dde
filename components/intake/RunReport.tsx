'use client';

import { useQuery } from '@tanstack/react-query';
import { api } from '@/components/api';
import { formatCount, formatDuration, type RejectedRow } from './api';
import type { IngestRunRecord as RunSummary } from '@/lib/intake/run-record';
import type { NetcdfLayout } from '@/lib/intake/netcdf/dataset';
import { RejectedRowsTable } from './RejectedRowsTable';
import { StatusBadge } from './StatusBadge';
import { Button } from '@/components/ui/Button';

interface RunDetail extends RunSummary {
  report: {
    rejectedRows?: RejectedRow[];
    rejectedTotal?: number;
    notes?: string[];
    layout?: { delimiter: string; header: string[] | null; encoding: string } | null;
    timeFormat?: string;
    netcdf?: NetcdfLayout | null;
  };
}

export function RunReport({ runId, onClose }: { runId: number; onClose: () => void }) {
  const query = useQuery({ queryKey: ['ingest-run', runId], queryFn: () => api<RunDetail>(`/api/ingest-runs/${runId}`) });
  return (
    <section aria-labelledby="run-report-title" className="rounded border border-rule bg-card p-4" data-testid="run-report">
      <div className="flex items-center justify-between gap-2">
        <h3 id="run-report-title" className="font-semibold">
          Report of run #{runId}
        </h3>
        <Button onClick={onClose}>Close report</Button>
      </div>
      {query.isPending && (
        <p className="mt-2 text-sm text-ink-soft" role="status">
          Loading the report…
        </p>
      )}
      {query.isError && (
        <p className="mt-2 text-sm text-warning" role="alert">
          {query.error.message}
        </p>
      )}
      {query.data && (
        <div className="mt-3 space-y-3 text-sm">
          <p className="flex flex-wrap items-center gap-2">
            <StatusBadge status={query.data.status} alreadyApplied={query.data.alreadyApplied} />
            <span>{query.data.message}</span>
          </p>
          <dl className="grid grid-cols-2 gap-x-4 gap-y-1 sm:grid-cols-6">
            {(
              [
                ['Rows read', query.data.rowsRead],
                ['Accepted', query.data.accepted],
                ['Duplicates', query.data.duplicates],
                ['Replaced', query.data.replaced],
                ['Rejected', query.data.rejected],
              ] as const
            ).map(([label, n]) => (
              <div key={label}>
                <dt className="text-xs text-ink-soft">{label}</dt>
                <dd className="font-mono">{formatCount(n)}</dd>
              </div>
            ))}
            <div>
              <dt className="text-xs text-ink-soft">Duration</dt>
              <dd className="font-mono">{formatDuration(query.data.durationMs)}</dd>
            </div>
          </dl>
          {query.data.report.layout && (
            <p className="text-ink-soft">
              Read as {query.data.report.layout.encoding}, delimiter “{query.data.report.layout.delimiter === '\t' ? 'tab' : query.data.report.layout.delimiter}
              ”,
              {query.data.report.layout.header ? ` header: ${query.data.report.layout.header.join(', ')}` : ' no header'}; time format{' '}
              {query.data.report.timeFormat}.
            </p>
          )}
          {query.data.report.netcdf && (
            <p className="text-ink-soft" data-testid="run-netcdf">
              Read from a netCDF file ({query.data.report.netcdf.format}): variable “{query.data.report.netcdf.variable}”
              {query.data.report.netcdf.flagVariable && `, flags from “${query.data.report.netcdf.flagVariable}”`}, times from “
              {query.data.report.netcdf.timeVariable}” in {query.data.report.netcdf.timeUnits} ({query.data.report.netcdf.calendar} calendar).
            </p>
          )}
          {query.data.report.notes?.map((note) => (
            <p key={note} className="rounded bg-watch-light px-2 py-1 text-watch">
              {note}
            </p>
          ))}
          <RejectedRowsTable
            rows={query.data.report.rejectedRows ?? []}
            total={query.data.report.rejectedTotal ?? 0}
            caption={`Rejected rows of run ${runId}`}
          />
        </div>
      )}
    </section>
  );
}
