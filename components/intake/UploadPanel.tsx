'use client';

import { useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import { useId, useState, type DragEvent } from 'react';
import { Caution } from '@/components/Caution';
import { SeriesPicker } from '@/components/SeriesPicker';
import type { SeriesChoice } from '@/lib/series/registry';
import { api, ApiError } from '@/components/api';
import { formatLocal } from '@/lib/display/format';
import { formatCount } from './api';
import { RejectedRowsTable } from './RejectedRowsTable';
import { Button } from '@/components/ui/Button';
import { DataTable } from '@/components/ui/DataTable';
import { CONTROL, Field } from '@/components/ui/Field';
import { SelectField } from '@/components/ui/SelectField';
import { DELIMITER_LABELS, INTAKE_BODY_LIMIT, MAX_REASON_LENGTH, TIME_FORMAT_LABELS } from '@/lib/intake/choices';
import type { NetcdfLayout } from '@/lib/intake/netcdf/dataset';
import type { PreviewSummary } from '@/lib/intake/run-record';

const TIME_FORMATS = Object.entries(TIME_FORMAT_LABELS);
const DELIMITERS = Object.entries(DELIMITER_LABELS);
const MAX_BYTES = INTAKE_BODY_LIMIT;

interface Mapping {
  timeColumn: number;
  valueColumn: number;
  timeFormat: string;
  delimiter: string;
  header: boolean;
}

interface Preview {
  fileName: string | null;
  netcdf: NetcdfLayout | null;
  layout: { delimiter: string; header: string[] | null; encoding: string; bom: boolean; delimiterDetected: boolean; fieldCount: number } | null;
  timeFormatGuess: string | null;
  mapping: { timeColumn: string | number; valueColumn: string | number; timeFormat: string };
  sample: { line: number; fields: string[] }[];
  summary: PreviewSummary | null;
  fileError: { code: string; message: string; variables?: string[] } | null;
}

interface Outcome {
  runId: number;
  status: string;
  message: string;
  accepted: number;
  duplicates: number;
  rejected: number;
}

/** A reprocessing upload replaces stored values whatever the series' duplicate policy, and says why. */
interface Delivery {
  reprocess: boolean;
  reason?: string;
}

function send(slug: string, file: File, mapping: Partial<Mapping> | { variable: string } | null, commit: boolean, delivery: Delivery) {
  const form = new FormData();
  form.append('file', file);
  if (mapping) form.append('mapping', JSON.stringify(mapping));
  if (delivery.reprocess) form.append('duplicatePolicy', 'replace');
  if (delivery.reason?.trim()) form.append('reason', delivery.reason.trim());
  return api<Preview & Outcome>(`/api/series/${slug}/uploads${commit ? '' : '/preview'}`, { method: 'POST', body: form });
}

/** The first rows of a file as the preview read them: a CSV's lines, or a netCDF variable's decoded readings. */
function SampleTable({ caption, lineLabel, columns, sample }: { caption: string; lineLabel: string; columns: string[]; sample: Preview['sample'] }) {
  return (
    <DataTable caption={caption} testId="preview-rows" className="font-mono text-xs" columns={[lineLabel, ...columns]}>
      {sample.map((row) => (
        <tr key={row.line}>
          <td className="px-2 py-1">{row.line}</td>
          {columns.map((_, i) => (
            <td key={i} className="px-2 py-1">
              {row.fields[i] ?? ''}
            </td>
          ))}
        </tr>
      ))}
    </DataTable>
  );
}

/**
 * Upload flow: pick or drop a CSV or netCDF file, check what was detected, adjust the mapping (for netCDF, the
 * variable), read the summary, then commit.
 */
export function UploadPanel({ hasSeries }: { hasSeries: boolean }) {
  const id = useId();
  const client = useQueryClient();
  // No series is preselected: an upload goes where its sender chose, never to whichever came first.
  const [target, setTarget] = useState<SeriesChoice | null>(null);
  const slug = target?.slug ?? '';
  const [file, setFile] = useState<File | null>(null);
  const [mapping, setMapping] = useState<Mapping | null>(null);
  // A netCDF file's variable, as chosen on the form (null: the series' own choice, or the file's only variable).
  const [variable, setVariable] = useState<string | null>(null);
  const [dragging, setDragging] = useState(false);
  const [sizeError, setSizeError] = useState<string | null>(null);
  // Why the data are sent again (reprocessing): kept with the data version the commit makes.
  const [reason, setReason] = useState('');
  const [reprocess, setReprocess] = useState(false);
  // The picker gives slug and name; the series' own record gives the zone its times are shown in (README: every
  // time on screen in the series' zone). Until it arrives, times read in UTC, which the label then says.
  const zone = useQuery({
    queryKey: ['series-zone', slug],
    queryFn: () => api<{ timeZone: string }>(`/api/series/${slug}`).then((s) => s.timeZone),
    enabled: Boolean(slug),
    staleTime: Infinity,
  });
  const timeZone = zone.data ?? 'UTC';

  const preview = useMutation({
    mutationFn: (input: { file: File; mapping: Mapping | { variable: string } | null; reprocess: boolean }) =>
      send(slug, input.file, input.mapping, false, input),
    onSuccess: (data, input) => {
      if (data.netcdf) setVariable(data.netcdf.variable);
      if (input.mapping || !data.layout) return;
      const header = data.layout.header;
      const index = (c: string | number) => (typeof c === 'number' ? c : Math.max(0, header?.findIndex((h) => h.toLowerCase() === c.toLowerCase()) ?? 0));
      setMapping({
        timeColumn: index(data.mapping.timeColumn),
        valueColumn: index(data.mapping.valueColumn),
        timeFormat: data.mapping.timeFormat,
        delimiter: data.layout.delimiter,
        header: header !== null,
      });
    },
  });
  const commit = useMutation({
    mutationFn: () => send(slug, file!, variable !== null ? { variable } : mapping, true, { reprocess, reason }),
    onSettled: () => {
      client.invalidateQueries({ queryKey: ['ingest-runs'] });
    },
  });

  const choose = (picked: File | null) => {
    commit.reset();
    setMapping(null);
    setVariable(null);
    setSizeError(null);
    setReprocess(false);
    setFile(picked);
    if (!picked) return;
    if (picked.size > MAX_BYTES) {
      setSizeError(
        `This file is ${(picked.size / 1024 / 1024).toFixed(1)} MB; uploads are limited to 50 MB. Put larger files in the series' drop folder instead.`,
      );
      return;
    }
    preview.mutate({ file: picked, mapping: null, reprocess: false });
  };
  const change = (patch: Partial<Mapping>) => {
    const next = { ...mapping!, ...patch };
    setMapping(next);
    commit.reset();
    if (file) preview.mutate({ file, mapping: next, reprocess });
  };
  const chooseVariable = (name: string) => {
    setVariable(name);
    commit.reset();
    if (file) preview.mutate({ file, mapping: { variable: name }, reprocess });
  };
  const onDrop = (event: DragEvent<HTMLLabelElement>) => {
    event.preventDefault();
    setDragging(false);
    choose(event.dataTransfer.files[0] ?? null);
  };

  const data = preview.data;
  const columns = data?.layout ? Array.from({ length: Math.max(data.layout.fieldCount, 1) }, (_, i) => data.layout!.header?.[i] || `Column ${i + 1}`) : [];
  const columnChoices = columns.map((name, i) => [i, name] as const);
  const summary = data?.summary;

  if (!hasSeries) return <p className="text-sm text-ink-soft">Register a series before uploading data.</p>;
  return (
    <section aria-labelledby={`${id}-title`} className="space-y-4 rounded border border-rule bg-card p-4" data-testid="upload-panel">
      <h2 id={`${id}-title`} className="text-lg font-semibold">
        Upload a CSV or netCDF file
      </h2>
      <SeriesPicker
        label="Series"
        required
        value={target}
        onChange={(choice) => {
          setTarget(choice);
          choose(null);
        }}
      />
      {!target ? (
        <p className="text-sm text-ink-soft">Choose the series these observations belong to, then the file.</p>
      ) : (
        <label
          htmlFor={`${id}-file`}
          onDragOver={(e) => {
            e.preventDefault();
            setDragging(true);
          }}
          onDragLeave={() => setDragging(false)}
          onDrop={onDrop}
          className={`flex cursor-pointer flex-col items-center rounded border-2 border-dashed px-4 py-6 text-sm focus-within:ring-2 focus-within:ring-tide ${dragging ? 'border-tide bg-tide-light' : 'border-rule'}`}
        >
          <span className="font-medium">Drag a CSV or netCDF file here, or choose one</span>
          <span className="text-ink-soft">Up to 50 MB. Nothing is stored until you commit.</span>
          <input
            id={`${id}-file`}
            type="file"
            accept=".csv,text/csv,text/plain,.nc,.nc4,.cdf,.netcdf,application/x-netcdf"
            className="mt-2 text-sm"
            onChange={(e) => choose(e.target.files?.[0] ?? null)}
          />
        </label>
      )}
      {sizeError && (
        <p role="alert" className="text-sm text-warning">
          {sizeError}
        </p>
      )}
      {preview.isPending && (
        <p role="status" className="text-sm text-ink-soft">
          Reading the file…
        </p>
      )}
      {preview.isError && (
        <p role="alert" className="text-sm text-warning">
          {preview.error.message}
        </p>
      )}
      {data?.fileError && (
        <p role="alert" className="rounded bg-warning-light px-3 py-2 text-sm text-warning" data-testid="file-error">
          {data.fileError.message}
        </p>
      )}
      {data && (data.netcdf || (data.fileError?.variables?.length ?? 0) > 0) && (
        <div className="space-y-3" data-testid="netcdf-detected">
          {data.netcdf && (
            <p className="text-sm text-ink-soft">
              Detected: a netCDF file ({data.netcdf.format}); times from “{data.netcdf.timeVariable}” in {data.netcdf.timeUnits} ({data.netcdf.calendar}{' '}
              calendar){data.netcdf.flagVariable && `; flags from “${data.netcdf.flagVariable}”`}.
            </p>
          )}
          <Field label="Variable" hint="The netCDF variable this series takes its values from.">
            <select value={variable ?? ''} onChange={(e) => chooseVariable(e.target.value)} className={CONTROL} data-testid="netcdf-variable">
              {variable === null && <option value="">Choose a variable</option>}
              {(data.netcdf?.candidates ?? data.fileError?.variables ?? []).map((name) => (
                <option key={name} value={name}>
                  {name}
                </option>
              ))}
            </select>
          </Field>
          {data.netcdf && (
            <SampleTable
              caption="First readings as decoded"
              lineLabel="Position"
              columns={data.netcdf.flagVariable ? ['Time (UTC)', 'Value', 'Flag'] : ['Time (UTC)', 'Value']}
              sample={data.sample}
            />
          )}
        </div>
      )}
      {data?.layout && mapping && (
        <div className="space-y-3">
          <p className="text-sm text-ink-soft" data-testid="detected">
            Detected: delimiter “{data.layout.delimiter === '\t' ? 'tab' : data.layout.delimiter}”
            {!data.layout.delimiterDetected && ' (no delimiter split the lines; check it)'},{data.layout.header ? ' a header line' : ' no header line'},{' '}
            {data.layout.encoding}
            {data.layout.bom && ' with byte order mark'}; time format guess: {data.timeFormatGuess ?? 'none'}.
          </p>
          <fieldset className="grid gap-3 text-sm sm:grid-cols-5">
            <legend className="sr-only">Column mapping</legend>
            <SelectField label="Time column" value={mapping.timeColumn} options={columnChoices} onChange={(v) => change({ timeColumn: Number(v) })} />
            <SelectField label="Value column" value={mapping.valueColumn} options={columnChoices} onChange={(v) => change({ valueColumn: Number(v) })} />
            <SelectField label="Time format" value={mapping.timeFormat} options={TIME_FORMATS} onChange={(v) => change({ timeFormat: v })} />
            <SelectField label="Delimiter" value={mapping.delimiter} options={DELIMITERS} onChange={(v) => change({ delimiter: v })} />
            <label className="flex items-center gap-2 self-end pb-1">
              <input type="checkbox" checked={mapping.header} onChange={(e) => change({ header: e.target.checked })} /> First line is a header
            </label>
          </fieldset>
          <SampleTable caption="First rows as read" lineLabel="Line" columns={columns} sample={data.sample} />
        </div>
      )}
      {summary && (
        <div className="space-y-2 text-sm" data-testid="validation-summary">
          <h3 className="font-semibold">Validation summary</h3>
          <p>
            {formatCount(summary.rowsRead)} rows read: <strong>{formatCount(summary.wouldAccept)} new</strong>, {formatCount(summary.wouldBeDuplicates)} already
            stored or repeated,
            {summary.wouldReplace > 0 && ` ${formatCount(summary.wouldReplace)} would replace stored values,`} {formatCount(summary.rejected)} rejected.
            {summary.first !== null &&
              summary.last !== null &&
              ` Spans ${formatLocal(summary.first, timeZone, false)} to ${formatLocal(summary.last, timeZone)}.`}
          </p>
          {summary.notes.map((note) => (
            <p key={note} className="rounded bg-watch-light px-2 py-1 text-watch">
              {note}
            </p>
          ))}
          <RejectedRowsTable rows={summary.rejectedRows} total={summary.rejected} caption="Rows that would be rejected" />
          <div className="rounded border border-rule bg-paper p-3">
            <Caution />
            <p className="mt-2 text-xs text-ink-soft">
              Committing stores the new points now and marks the series for a fresh analysis; rejected rows are not stored and stay listed in the run&apos;s
              report.
            </p>
          </div>
          {summary.conflicts > 0 || reprocess ? (
            <label className="flex items-center gap-2">
              <input
                type="checkbox"
                checked={reprocess}
                data-testid="upload-reprocess"
                onChange={(event) => {
                  setReprocess(event.target.checked);
                  commit.reset();
                  if (file) preview.mutate({ file, mapping, reprocess: event.target.checked });
                }}
              />
              These are reprocessed data: replace the stored values that differ (the stored ones are kept as an earlier version)
            </label>
          ) : null}
          {summary.wouldReplace > 0 ? (
            <Field
              label="Why these values replace stored ones"
              hint="Kept with the data version this commit makes; the replaced values stay on record as the earlier version."
              error={commit.error instanceof ApiError ? (commit.error.fields?.reason?.[0] ?? null) : null}
            >
              <input
                className={`${CONTROL} w-full max-w-xl`}
                maxLength={MAX_REASON_LENGTH}
                value={reason}
                onChange={(event) => setReason(event.target.value)}
                data-testid="upload-reason"
              />
            </Field>
          ) : null}
          <Button
            variant="primary"
            size="lg"
            disabled={commit.isPending || summary.wouldAccept + summary.wouldReplace === 0 || commit.isSuccess || (reprocess && !reason.trim())}
            onClick={() => commit.mutate()}
          >
            {commit.isPending ? 'Storing…' : `Commit ${formatCount(summary.wouldAccept + summary.wouldReplace)} points`}
          </Button>
          {commit.isError && (
            <p role="alert" className="text-warning">
              {commit.error.message}
            </p>
          )}
          {commit.data && (
            <p role="status" className="rounded bg-calm-light px-3 py-2 text-calm" data-testid="commit-outcome">
              Run #{commit.data.runId}: {commit.data.message}
            </p>
          )}
        </div>
      )}
    </section>
  );
}
