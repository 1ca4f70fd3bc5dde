'use client';

import { useQuery } from '@tanstack/react-query';
import { api } from '@/components/api';
import { formatCount, formatDuration, type RejectedRow } from './api';
import type { IngestRunRecord as RunSummary } from '@/lib/intake/run-record';
import type { NetcdfLayout } from '@/lib/intake/netcdf/dataset';
import { RejectedRowsTable } from './RejectedRowsTable';
import { StatusBadge } from './StatusBadge';
import { Button } from '@/components/ui/Button';
import { CELL_TIGHT, DataTable } from '@/components/ui/DataTable';
import { SETTER_LABELS } from '@/lib/quality/flags';

interface RunDetail extends RunSummary {
  report: {
    rejectedRows?: RejectedRow[];
    rejectedTotal?: number;
    notes?: string[];
    layout?: { delimiter: string; header: string[] | null; encoding: string } | null;
    timeFormat?: string;
    netcdf?: NetcdfLayout | null;
    /** points written per QARTOD flag label */
    flagged?: Record<string, number>;
    /** the same per flag label and what set it (a test's name, `source`, `none`) */
    flaggedBy?: Record<string, Record<string, number>>;
    /** the series' data version this run made (null when it stored nothing) */
    dataVersion?: number | null;
    reason?: string | null;
  };
}

/** Flags in the order of the QARTOD scale, as the run report lists them. */
const FLAG_ORDER = ['pass', 'suspect', 'fail', 'missing', 'not evaluated'];

/** The run's points per flag and which test set them (the series' run; a feed file writes one run per series). */
function FlagCounts({ report, runId }: { report: RunDetail['report']; runId: number }) {
  const flagged = report.flagged ?? {};
  const labels = [...FLAG_ORDER.filter((label) => label in flagged), ...Object.keys(flagged).filter((label) => !FLAG_ORDER.includes(label))];
  if (labels.length === 0) return null;
  return (
    <DataTable caption={`Quality flags of the points run ${runId} wrote`} showCaption frame="plain" columns={['Flag', 'Points', 'Set by']} testId="run-flags">
      {labels.map((label) => (
        <tr key={label}>
          <td className={CELL_TIGHT}>{label}</td>
          <td className={`${CELL_TIGHT} font-mono`}>{formatCount(flagged[label])}</td>
          <td className={CELL_TIGHT}>
            {Object.entries(report.flaggedBy?.[label] ?? {})
              .map(([setter, n]) => `${SETTER_LABELS[setter as keyof typeof SETTER_LABELS] ?? setter} ${formatCount(n)}`)
              .join(' · ') || '–'}
          </td>
        </tr>
      ))}
    </DataTable>
  );
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
          {typeof query.data.report.dataVersion === 'number' ? (
            <p data-testid="run-data-version">
              Made data version {query.data.report.dataVersion} of the series{query.data.report.reason ? `; reason given: ${query.data.report.reason}` : ''}.
            </p>
          ) : null}
          <FlagCounts report={query.data.report} runId={runId} />
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
