'use client';

import { useState } from 'react';
import Papa from 'papaparse';
import { useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import { api, ApiError } from '@/components/api';
import { Button } from '@/components/ui/Button';
import { CONTROL, CONTROL_BARE, Field } from '@/components/ui/Field';
import { DataTable, CELL_TIGHT } from '@/components/ui/DataTable';
import { TIME_FORMAT_LABELS } from '@/lib/intake/choices';
import { guessFlagColumns, guessTimeColumn, type FeedSample } from '@/lib/feeds/sample';
import type { TimeFormat } from '@/lib/intake/time-formats';

const SAMPLE_BYTES = 65_536;

async function readSample(file: File): Promise<FeedSample> {
  const text = await file.slice(0, SAMPLE_BYTES).text();
  const parsed = Papa.parse<string[]>(text, { preview: 6, skipEmptyLines: true });
  const [columns = [], ...rows] = parsed.data;
  return { columns: columns.map((c) => c.trim()), rows };
}

/**
 * Adds a feed from a sample station file: its columns are read in the browser (nothing is uploaded), the time
 * column and flag columns are guessed from their names, and each value column is mapped to a series by picking.
 */
export function FeedForm() {
  const queryClient = useQueryClient();
  const series = useQuery({ queryKey: ['series-choices'], queryFn: () => api<{ items: { slug: string; name: string }[] }>('/api/series?limit=1000') });
  const [sample, setSample] = useState<FeedSample | null>(null);
  const [sampleError, setSampleError] = useState<string | null>(null);
  const [slug, setSlug] = useState('');
  const [name, setName] = useState('');
  const [timeColumn, setTimeColumn] = useState('');
  const [timeFormat, setTimeFormat] = useState<TimeFormat>('iso8601');
  const [columns, setColumns] = useState<Record<string, string>>({});
  const [flagColumns, setFlagColumns] = useState<Record<string, string>>({});
  const [maintenanceColumn, setMaintenanceColumn] = useState('');
  const create = useMutation({
    mutationFn: () =>
      api('/api/feeds', {
        method: 'POST',
        body: {
          slug,
          name,
          timeColumn,
          timeFormat,
          columns: pick(columns),
          flagColumns: pick(flagColumns, columns),
          maintenanceColumn: maintenanceColumn || null,
        },
      }),
    onSuccess: () => queryClient.invalidateQueries({ queryKey: ['feeds'] }),
  });
  const fields = create.error instanceof ApiError ? (create.error.fields ?? {}) : {};

  const choose = async (file: File | undefined) => {
    setSampleError(null);
    if (!file) return;
    try {
      const read = await readSample(file);
      if (read.columns.length < 2) throw new Error('The sample has fewer than two columns; check that it is a delimited text file with a header line.');
      setSample(read);
      setTimeColumn(guessTimeColumn(read.columns));
      setFlagColumns(guessFlagColumns(read.columns));
      setColumns({});
      setMaintenanceColumn('');
    } catch (error) {
      setSample(null);
      setSampleError(error instanceof Error ? error.message : 'The sample could not be read.');
    }
  };
  const valueColumns = sample ? sample.columns.filter((c) => c !== timeColumn && c !== maintenanceColumn && !Object.values(flagColumns).includes(c)) : [];
  const sampleOf = (column: string) =>
    sample?.rows
      .map((row) => row[sample.columns.indexOf(column)] ?? '')
      .slice(0, 3)
      .join(' · ') ?? '';

  return (
    <form
      className="space-y-4 rounded border border-rule bg-card p-4"
      data-testid="feed-form"
      onSubmit={(event) => {
        event.preventDefault();
        create.mutate();
      }}
    >
      <h2 className="font-semibold">Add a station feed</h2>
      <Field label="Sample station file" hint="Read in your browser to find its columns; nothing is uploaded." error={sampleError}>
        <input
          type="file"
          accept=".csv,.txt,text/csv"
          className={CONTROL}
          onChange={(event) => void choose(event.target.files?.[0])}
          data-testid="feed-sample"
        />
      </Field>
      {sample ? (
        <>
          <div className="grid gap-3 sm:grid-cols-2">
            <Field label="Feed name" error={fields.name?.[0]}>
              <input className={CONTROL} value={name} onChange={(e) => setName(e.target.value)} required />
            </Field>
            <Field
              label="Short name (folder and address)"
              hint="Lower-case letters, digits and hyphens: files go to DROP_DIR/feeds/<this>/."
              error={fields.slug?.[0]}
            >
              <input className={CONTROL} value={slug} onChange={(e) => setSlug(e.target.value)} required data-testid="feed-slug" />
            </Field>
            <Field label="Time column" error={fields.timeColumn?.[0]}>
              <select className={CONTROL} value={timeColumn} onChange={(e) => setTimeColumn(e.target.value)}>
                {sample.columns.map((c) => (
                  <option key={c} value={c}>
                    {c}
                  </option>
                ))}
              </select>
            </Field>
            <Field label="Time format" error={fields.timeFormat?.[0]}>
              <select className={CONTROL} value={timeFormat} onChange={(e) => setTimeFormat(e.target.value as TimeFormat)}>
                {Object.entries(TIME_FORMAT_LABELS).map(([value, label]) => (
                  <option key={value} value={value}>
                    {label}
                  </option>
                ))}
              </select>
            </Field>
            <Field
              label="Maintenance column (optional)"
              hint="A filled cell marks a maintenance visit or sensor event on every series of the feed; the analysis starts after the latest."
              error={fields.maintenanceColumn?.[0]}
            >
              <select className={CONTROL} value={maintenanceColumn} onChange={(e) => setMaintenanceColumn(e.target.value)}>
                <option value="">none</option>
                {sample.columns
                  .filter((c) => c !== timeColumn)
                  .map((c) => (
                    <option key={c} value={c}>
                      {c}
                    </option>
                  ))}
              </select>
            </Field>
          </div>
          {series.isPending ? (
            <p className="text-sm text-ink-soft" role="status">
              Loading series…
            </p>
          ) : null}
          {series.isError ? (
            <p className="text-sm text-warning" role="alert">
              The series could not be loaded, so columns cannot be mapped just now.
            </p>
          ) : null}
          {series.data && series.data.items.length === 0 ? (
            <p className="text-sm text-ink-soft">No series is registered yet; create the series a feed fills first.</p>
          ) : null}
          {series.data && series.data.items.length > 0 ? (
            <DataTable
              caption="Map each column to a series"
              showCaption
              columns={['Column', 'First values', 'Feeds series', 'Its flag column']}
              testId="feed-mapping"
            >
              {valueColumns.map((column) => (
                <tr key={column} className="border-b border-rule last:border-0">
                  <td className={CELL_TIGHT}>{column}</td>
                  <td className={`${CELL_TIGHT} font-mono text-xs text-ink-soft`}>{sampleOf(column)}</td>
                  <td className={CELL_TIGHT}>
                    <select
                      className={CONTROL_BARE}
                      aria-label={`Series fed by ${column}`}
                      value={columns[column] ?? ''}
                      onChange={(e) => setColumns({ ...columns, [column]: e.target.value })}
                    >
                      <option value="">not used</option>
                      {series.data.items.map((s) => (
                        <option key={s.slug} value={s.slug}>
                          {s.name} ({s.slug})
                        </option>
                      ))}
                    </select>
                  </td>
                  <td className={CELL_TIGHT}>
                    <select
                      className={CONTROL_BARE}
                      aria-label={`Flag column of ${column}`}
                      value={flagColumns[column] ?? ''}
                      onChange={(e) => setFlagColumns({ ...flagColumns, [column]: e.target.value })}
                    >
                      <option value="">none</option>
                      {sample.columns
                        .filter((c) => c !== timeColumn && c !== column)
                        .map((c) => (
                          <option key={c} value={c}>
                            {c}
                          </option>
                        ))}
                    </select>
                  </td>
                </tr>
              ))}
            </DataTable>
          ) : null}
          {fields.columns ? <p className="text-xs text-warning">{fields.columns[0]}</p> : null}
          {create.isError ? (
            <p className="text-sm text-warning" role="alert">
              {create.error.message}
            </p>
          ) : null}
          {create.isSuccess ? (
            <p className="text-sm text-tide-dark" role="status">
              Feed added. Drop its files into DROP_DIR/feeds/{slug}/.
            </p>
          ) : null}
          <Button type="submit" variant="primary" disabled={create.isPending}>
            {create.isPending ? 'Adding…' : 'Add feed'}
          </Button>
        </>
      ) : null}
    </form>
  );
}

/** The chosen entries only: a column left "not used" (or its flag "none") is not sent. */
function pick(choice: Record<string, string>, usedColumns?: Record<string, string>): Record<string, string> {
  return Object.fromEntries(Object.entries(choice).filter(([column, value]) => value && (!usedColumns || usedColumns[column])));
}
