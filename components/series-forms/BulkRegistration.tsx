'use client';

import { useMutation } from '@tanstack/react-query';
import Link from 'next/link';
import { useState, type ChangeEvent } from 'react';
import { api } from '@/components/api';
import { ErrorNote } from '@/components/States';
import { Button } from '@/components/ui/Button';
import { CELL_TIGHT, DataTable } from '@/components/ui/DataTable';
import { CONTROL, Field } from '@/components/ui/Field';
import { BULK_COLUMNS } from '@/lib/schemas/series';
import type { BulkReport } from '@/lib/series/bulk';
import { failureText } from './form-parts';

const EXAMPLE = `slug,name,site,unit,interval,timeZone,timeColumn,valueColumn
north-basin-temp,North basin temperature,North basin,°C,PT1H,Europe/Oslo,time,value
north-basin-oxygen,North basin oxygen,North basin,mg/L,PT1H,Europe/Oslo,time,value`;

/** The preview: every row with its errors, or that it is ready. */
function Preview({ report }: { report: BulkReport }) {
  const bad = report.rows.filter((row) => Object.keys(row.errors).length > 0).length;
  return (
    <div className="space-y-2" data-testid="bulk-preview">
      <p className="text-sm" role="status">
        {report.rows.length} rows ·{' '}
        {bad ? (
          <span className="text-warning">{bad} with errors: fix them and check again; nothing is registered until every row is right.</span>
        ) : (
          <span className="text-calm">all ready</span>
        )}
        {report.newSites.length ? ` · new sites: ${report.newSites.join(', ')}` : ''}
      </p>
      <DataTable caption="Rows of the list" frame="scroll" columns={['Row', 'Slug', 'Name', 'Site', 'Check']}>
        {report.rows.map((row) => {
          const errors = Object.entries(row.errors);
          return (
            <tr key={row.row} data-row={row.row} data-valid={errors.length === 0} className={errors.length ? 'bg-warning-light/40' : undefined}>
              <td className={`${CELL_TIGHT} num`}>{row.row}</td>
              <td className={`${CELL_TIGHT} font-mono`}>{row.slug || <span className="text-ink-faint">–</span>}</td>
              <td className={CELL_TIGHT}>{row.name}</td>
              <td className={CELL_TIGHT}>{row.site}</td>
              <td className={CELL_TIGHT}>
                {errors.length === 0 ? (
                  <span className="text-calm">✓ ready</span>
                ) : (
                  <ul className="text-warning" data-testid="row-errors">
                    {errors.map(([field, messages]) => (
                      <li key={field}>
                        ✕ {field === '_' ? '' : `${field}: `}
                        {messages.join(' ')}
                      </li>
                    ))}
                  </ul>
                )}
              </td>
            </tr>
          );
        })}
      </DataTable>
    </div>
  );
}

/**
 * Bulk registration: a CSV list (pasted or from a file) is checked by the server first (`?dryRun=1`: per-row
 * errors, slugs repeated in the list or already taken), and only a list without errors can be registered, all
 * series in one transaction.
 */
export function BulkRegistration() {
  const [csv, setCsv] = useState('');
  const [checked, setChecked] = useState<string | null>(null);
  const check = useMutation({
    mutationFn: (list: string) => api<BulkReport>('/api/series/bulk?dryRun=1', { method: 'POST', body: { csv: list } }),
    onSuccess: (_report, list) => setChecked(list),
  });
  const create = useMutation({ mutationFn: (list: string) => api<BulkReport>('/api/series/bulk', { method: 'POST', body: { csv: list } }) });
  // A preview belongs to the text it checked; an edit asks for a new check.
  const report = check.data && checked === csv ? check.data : null;

  async function readFile(event: ChangeEvent<HTMLInputElement>) {
    const file = event.target.files?.[0];
    if (file) setCsv(await file.text());
  }

  if (create.isSuccess) {
    return (
      <p role="status" className="rounded bg-calm-light px-4 py-3 text-sm" data-testid="bulk-created">
        ✓ {create.data.created} series registered{create.data.newSites.length ? `, with ${create.data.newSites.length} new sites` : ''}. See them on the{' '}
        <Link href="/" className="text-tide hover:underline">
          overview
        </Link>{' '}
        or the{' '}
        <Link href="/sites" className="text-tide hover:underline">
          sites
        </Link>{' '}
        page.
      </p>
    );
  }

  return (
    <div className="space-y-4">
      <details className="rounded-lg border border-rule bg-card p-3 text-sm">
        <summary className="cursor-pointer font-medium">Columns of the list</summary>
        <p className="mt-2 text-ink-soft">
          One row a series; the header row names the columns, in any order. Only slug and name are required; the rest take the defaults of a single
          registration.
        </p>
        <dl className="mt-2 grid grid-cols-[auto_1fr] gap-x-4 gap-y-1">
          {Object.entries(BULK_COLUMNS).map(([name, help]) => (
            <div key={name} className="contents">
              <dt className="font-mono">{name}</dt>
              <dd className="text-ink-soft">{help}</dd>
            </div>
          ))}
        </dl>
        <pre className="mt-2 overflow-x-auto rounded bg-paper p-2 text-xs">{EXAMPLE}</pre>
      </details>
      <div className="flex flex-wrap items-end gap-3">
        <Field label="A CSV file" tone="filter">
          <input type="file" accept=".csv,text/csv,text/plain" onChange={readFile} className={CONTROL} />
        </Field>
        <span className="pb-2 text-sm text-ink-soft">or paste the list below</span>
      </div>
      <Field label="The list">
        <textarea
          rows={10}
          value={csv}
          onChange={(e) => setCsv(e.target.value)}
          placeholder={EXAMPLE}
          spellCheck={false}
          className={`${CONTROL} w-full font-mono text-xs`}
          data-testid="bulk-text"
        />
      </Field>
      <div className="flex flex-wrap gap-3">
        <Button variant={report?.valid ? 'secondary' : 'primary'} disabled={!csv.trim() || check.isPending} onClick={() => check.mutate(csv)}>
          {check.isPending ? 'Checking…' : 'Check the list'}
        </Button>
        <Button variant="primary" disabled={!report?.valid || create.isPending} onClick={() => create.mutate(csv)} data-testid="bulk-create">
          {create.isPending ? 'Registering…' : report?.valid ? `Register all ${report.rows.length} series` : 'Register all'}
        </Button>
      </div>
      {check.isError ? <ErrorNote>Not checked. {failureText(check.error)}</ErrorNote> : null}
      {create.isError ? <ErrorNote>Nothing was registered. {failureText(create.error)}</ErrorNote> : null}
      {report?.listErrors.length ? <ErrorNote>{report.listErrors.join(' ')}</ErrorNote> : null}
      {report && report.rows.length ? <Preview report={report} /> : null}
    </div>
  );
}
