'use client';

import { useState } from 'react';
import { useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import { api, ApiError } from '@/components/api';
import { LocalTime } from '@/components/LocalTime';
import { Empty, ErrorNote, Loading } from '@/components/States';
import { Button } from '@/components/ui/Button';
import { CONTROL, Field } from '@/components/ui/Field';
import { CELL_TIGHT, DataTable } from '@/components/ui/DataTable';
import { INDICATOR_LABELS } from '@/lib/display/analysis-labels';
import { formatP } from '@/lib/display/format';
import { tauWithDirection } from '@/lib/alerts/wording';
import type { DataVersionsOverview, IndicatorTrendLine, ReanalysisRecord } from '@/lib/analysis/reanalysis-record';

/** Re-analyses shown beside the live analysis in the comparison table. */
const COMPARED = 3;

const SOURCE_WORDS: Record<string, string> = { drop: 'drop folder', upload: 'upload', push: 'push' };

function trendCell(line: IndicatorTrendLine | undefined) {
  if (!line) return <span className="text-ink-faint">–</span>;
  return (
    <span className="num">
      {tauWithDirection(line.tau, line.direction)}
      {line.surrogateP !== null ? <span className="text-ink-soft">, surrogate p {formatP(line.surrogateP)}</span> : null}
    </span>
  );
}

/** Live analysis and the latest re-analyses side by side: each indicator's tau and surrogate p per data version. */
function Comparison({ overview }: { overview: DataVersionsOverview }) {
  const columns: { key: string; label: string; trends: IndicatorTrendLine[] }[] = [];
  if (overview.liveSnapshot) {
    const v = overview.liveSnapshot.dataVersion;
    columns.push({
      key: 'live',
      label: `Live analysis #${overview.liveSnapshot.id} (${v === null ? 'version not recorded' : `version ${v}`})`,
      trends: overview.liveSnapshot.trends,
    });
  }
  for (const r of overview.reanalyses.filter((r) => r.status === 'ok').slice(0, COMPARED)) {
    columns.push({ key: `r${r.id}`, label: `Re-analysis #${r.id} (version ${r.dataVersion})`, trends: r.trends });
  }
  const names = [...new Set(columns.flatMap((c) => c.trends.map((t) => t.name)))];
  if (columns.length < 2 || names.length === 0) return null;
  return (
    <DataTable
      caption="Indicator trends per data version"
      showCaption
      frame="plain"
      columns={['Indicator', ...columns.map((c) => c.label)]}
      testId="reanalysis-comparison"
    >
      {names.map((name) => (
        <tr key={name}>
          <th scope="row" className={`${CELL_TIGHT} text-left font-normal`}>
            {INDICATOR_LABELS[name] ?? name}
          </th>
          {columns.map((c) => (
            <td key={c.key} className={CELL_TIGHT}>
              {trendCell(c.trends.find((t) => t.name === name))}
            </td>
          ))}
        </tr>
      ))}
    </DataTable>
  );
}

function ReanalysisLine({ r, timeZone }: { r: ReanalysisRecord; timeZone: string }) {
  return (
    <li data-testid="reanalysis">
      #{r.id} on version {r.dataVersion}
      {r.onCurrentVersion ? ' (current)' : ''}, <LocalTime t={r.createdAt} timeZone={timeZone} />:{' '}
      {r.status === 'ok' ? `${r.n.toLocaleString('en')} points` : r.error}
      {r.sameDataAsSnapshot !== null ? `; same data as live analysis #${r.sameDataAsSnapshot}` : ''}
      <span className="block break-all font-mono text-xs text-ink-soft">SHA-256 {r.dataSha256}</span>
    </li>
  );
}

/**
 * The series' data versions (one per intake run that stored new or replaced values: who, when, why), which version
 * the live evidence read, and re-analyses on a chosen version: a lead runs one to see what the indicators said on
 * the data before reprocessing. Re-analyses are kept beside the live evidence; rules never judge them.
 */
export function DataVersionsPanel({ slug, timeZone, canReanalyse }: { slug: string; timeZone: string; canReanalyse: boolean }) {
  const client = useQueryClient();
  const key = ['data-versions', slug];
  const query = useQuery({ queryKey: key, queryFn: () => api<DataVersionsOverview>(`/api/series/${slug}/data-versions`) });
  const [chosen, setChosen] = useState<string>('');
  const reanalyse = useMutation({
    mutationFn: (version: number) => api<ReanalysisRecord>(`/api/series/${slug}/reanalyse`, { method: 'POST', body: { version } }),
    onSuccess: () => client.invalidateQueries({ queryKey: key }),
  });
  const overview = query.data;
  const version = chosen === '' ? (overview?.currentVersion ?? 0) : Number(chosen);
  const fieldError = reanalyse.error instanceof ApiError ? (reanalyse.error.fields?.version?.[0] ?? null) : null;
  return (
    <details className="rounded border border-rule bg-card p-4" data-testid="data-versions">
      <summary className="cursor-pointer font-semibold">Data versions and re-analysis</summary>
      <div className="mt-3 space-y-3 text-sm">
        {query.isPending ? <Loading label="Loading the data versions…" /> : null}
        {query.isError ? <ErrorNote error={query.error}>The data versions could not be loaded.</ErrorNote> : null}
        {overview ? (
          <>
            <p data-testid="data-version-current">
              The record is at data version {overview.currentVersion}.{' '}
              {overview.liveSnapshot === null
                ? 'No analysis has succeeded yet.'
                : overview.liveSnapshot.dataVersion === null
                  ? `The live analysis #${overview.liveSnapshot.id} was stored before data versions were counted.`
                  : `The live analysis #${overview.liveSnapshot.id} read version ${overview.liveSnapshot.dataVersion}${
                      overview.liveSnapshot.dataVersion < overview.currentVersion ? '; newer data wait for the next analysis cycle' : ''
                    }.`}
            </p>
            {overview.versions.length === 0 ? (
              <Empty>No intake run has stored data since versions were counted; version 0 is the record as it stood then.</Empty>
            ) : (
              <DataTable
                caption="Data versions, newest first"
                frame="scroll"
                columns={['Version', 'Stored', 'Run', 'How', 'By', 'New', 'Replaced', 'Reason']}
                testId="data-version-table"
              >
                {overview.versions.map((v) => (
                  <tr key={v.version}>
                    <td className={`${CELL_TIGHT} num`}>{v.version}</td>
                    <td className={CELL_TIGHT}>
                      <LocalTime t={v.at} timeZone={timeZone} />
                    </td>
                    <td className={`${CELL_TIGHT} num`}>#{v.runId}</td>
                    <td className={CELL_TIGHT}>
                      {SOURCE_WORDS[v.source ?? ''] ?? v.source ?? '–'}
                      {v.fileName ? ` (${v.fileName})` : ''}
                    </td>
                    <td className={CELL_TIGHT}>{v.userName ?? (v.tokenId !== null ? `push token #${v.tokenId}` : 'the system')}</td>
                    <td className={`${CELL_TIGHT} num`}>{v.inserted.toLocaleString('en')}</td>
                    <td className={`${CELL_TIGHT} num`}>{v.replaced.toLocaleString('en')}</td>
                    <td className={CELL_TIGHT}>{v.reason ?? <span className="text-ink-faint">none given</span>}</td>
                  </tr>
                ))}
              </DataTable>
            )}
            {canReanalyse ? (
              <form
                className="flex flex-wrap items-end gap-3"
                onSubmit={(event) => {
                  event.preventDefault();
                  reanalyse.mutate(version);
                }}
              >
                <Field label="Data version" error={fieldError}>
                  <select
                    className={`${CONTROL} w-80`}
                    value={String(version)}
                    onChange={(event) => setChosen(event.target.value)}
                    data-testid="reanalyse-version"
                  >
                    {Array.from({ length: overview.currentVersion + 1 }, (_, i) => overview.currentVersion - i).map((v) => (
                      <option key={v} value={v}>
                        {v === overview.currentVersion ? `${v} (current)` : v === 0 ? '0 (before versions were counted)' : String(v)}
                      </option>
                    ))}
                  </select>
                </Field>
                <Button type="submit" variant="primary" disabled={reanalyse.isPending} data-testid="reanalyse-button">
                  {reanalyse.isPending ? 'Analysing…' : 'Re-analyse on this version'}
                </Button>
                <p className="basis-full text-xs text-ink-soft">
                  Uses today’s settings and marks on the values the record held at that version. The outcome is kept beside the live evidence: rules never judge
                  it and no alert or mail comes of it.
                </p>
              </form>
            ) : null}
            {reanalyse.isError && !fieldError ? <ErrorNote error={reanalyse.error}>The re-analysis failed.</ErrorNote> : null}
            <Comparison overview={overview} />
            {overview.reanalyses.length ? (
              <ul className="space-y-1">
                {overview.reanalyses.map((r) => (
                  <ReanalysisLine key={r.id} r={r} timeZone={timeZone} />
                ))}
              </ul>
            ) : (
              <Empty>No re-analysis yet.</Empty>
            )}
          </>
        ) : null}
      </div>
    </details>
  );
}
