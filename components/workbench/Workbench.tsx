'use client';

import { keepPreviousData, useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import Link from 'next/link';
import { useRouter } from 'next/navigation';
import { useState } from 'react';
import { api } from '@/components/api';
import { Empty, ErrorNote, Loading, Panel } from '@/components/States';
import { SensitivityHeatmap } from '@/components/charts/SensitivityHeatmap';
import { SurrogateHistogram } from '@/components/charts/SurrogateHistogram';
import { ChartFrame } from '@/components/charts/ChartFrame';
import type { AnalysisView } from '@/lib/analysis/view';
import type { AnalysisSettings } from '@/lib/engine/settings';
import { formatP } from '@/lib/display/format';
import { formatTauDirection, indicatorLabel, stretchReason } from '@/lib/display/analysis-labels';
import type { SettingsHistoryEntry } from '@/lib/analysis/settings-history';
import { AnalysisCharts, type ChartSeries } from './AnalysisCharts';
import { SettingsHistory } from './SettingsHistory';
import { TuningPanel } from './TuningPanel';
import { useDebounced } from './use-debounced';
import { ChartChooser } from './ChartChooser';
import type { SeriesChart } from '@/lib/schemas/account';
import { Button, buttonClass } from '@/components/ui/Button';
import { ReasonField, reasonBody } from '@/components/ui/ReasonField';

const same = (a: unknown, b: unknown) => JSON.stringify(a) === JSON.stringify(b);
const linkButton = buttonClass('secondary');

export interface WorkbenchProps {
  series: ChartSeries;
  savedSettings: AnalysisSettings;
  initialView: AnalysisView | null;
  canTune: boolean;
  canSave: boolean;
  marks: { at: number; note: string; kind?: 'tipping-point' | 'maintenance' }[];
  history: SettingsHistoryEntry[];
  quality: React.ReactNode;
  /** the reader's saved choice of charts, in order (their preferences) */
  charts: SeriesChart[];
}

async function downloadPosted(slug: string, settings: AnalysisSettings, format: 'csv' | 'json') {
  const response = await fetch(`/api/series/${slug}/indicators?format=${format}`, {
    method: 'POST',
    headers: { 'content-type': 'application/json' },
    body: JSON.stringify({ settings }),
  });
  if (!response.ok) throw new Error((await response.json().catch(() => null))?.error?.message ?? 'Export failed.');
  const url = URL.createObjectURL(await response.blob());
  const link = document.createElement('a');
  link.href = url;
  link.download = `${slug}-indicators-preview.${format}`;
  link.click();
  setTimeout(() => URL.revokeObjectURL(url), 1000);
}

/**
 * The series workbench: evidence charts of the saved analysis, and for analysts a tuning form whose changes are
 * recomputed (debounced) by the preview endpoint without saving; leads save the settings they settle on.
 */
export function Workbench({ series, savedSettings, initialView, canTune, canSave, marks, history, quality, charts: savedCharts }: WorkbenchProps) {
  const [charts, setCharts] = useState(savedCharts);
  const router = useRouter();
  const queryClient = useQueryClient();
  const [saved, setSaved] = useState(savedSettings);
  const [draft, setDraft] = useState(savedSettings);
  const debounced = useDebounced(draft, 400);
  const changed = !same(debounced, saved);
  const preview = useQuery({
    queryKey: ['preview', series.slug, debounced],
    queryFn: ({ signal }) => api<AnalysisView>(`/api/series/${series.slug}/analysis/preview`, { method: 'POST', body: { settings: debounced }, signal }),
    enabled: canTune && (changed || initialView === null),
    placeholderData: keepPreviousData,
    staleTime: Infinity,
    retry: false,
  });
  const [reason, setReason] = useState('');
  const save = useMutation({
    mutationFn: (settings: AnalysisSettings) => api(`/api/series/${series.slug}`, { method: 'PATCH', body: { settings, ...reasonBody(reason) } }),
    onSuccess: () => {
      setSaved(draft);
      setReason('');
      void queryClient.invalidateQueries({ queryKey: ['settings-history', series.slug] });
      router.refresh();
    },
  });
  const [exportError, setExportError] = useState<string | null>(null);

  const showingPreview = canTune && (changed || initialView === null) && preview.data !== undefined;
  const view = showingPreview ? preview.data! : initialView;
  const pending = draft !== debounced || preview.isFetching;
  // Surrogate histograms of the indicators the reader charts, in the same order, so the page stays as long as they chose.
  const tested = view
    ? (charts.filter(
        (key) => (view.indicators as string[]).includes(key) && view.significance[key as keyof AnalysisView['significance']],
      ) as (keyof AnalysisView['significance'])[])
    : [];

  return (
    <div className="grid grid-cols-1 gap-4 lg:grid-cols-[minmax(0,1fr)_320px]">
      <div className="min-w-0 space-y-4">
        <div className="flex flex-wrap items-center gap-2 text-sm" aria-live="polite">
          {showingPreview ? (
            <span className="rounded bg-watch-light px-2 py-0.5 text-watch" data-testid="preview-flag">
              ◐ Preview of unsaved settings
            </span>
          ) : (
            <span className="rounded bg-calm-light px-2 py-0.5 text-calm">● Saved analysis</span>
          )}
          {pending && canTune ? <span className="text-ink-soft">Recomputing…</span> : null}
          {view ? (
            <span className="num text-ink-soft">
              window {view.windowPoints} points · {view.n} points analysed{view.stretch ? `, ${stretchReason(view.stretch.startsAfter)}` : ''}
            </span>
          ) : null}
        </div>
        {preview.isError ? <ErrorNote error={preview.error}>These settings cannot be applied to this record.</ErrorNote> : null}
        {view ? (
          <>
            <AnalysisCharts view={view} series={series} marks={marks} charts={charts} />
            {charts.every((key) => key !== 'record' && key !== 'residuals' && !view.indicators.includes(key)) ? (
              <Empty>No chart chosen. Tick the charts to show under “Charts shown”.</Empty>
            ) : null}
            <Panel title="Significance against surrogate data" id="significance">
              {Object.keys(view.significance).length === 0 ? (
                <Empty>No surrogates in these settings. Set a number of surrogate series to test each trend against chance.</Empty>
              ) : tested.length === 0 ? (
                <Empty>Tick an indicator under “Charts shown” to see its surrogate taus here; the evidence table above lists every indicator’s p.</Empty>
              ) : (
                <div className="grid grid-cols-1 gap-3 md:grid-cols-2">
                  {tested.map((name) => {
                    const s = view.significance[name]!;
                    return (
                      <ChartFrame
                        key={name}
                        title={`${indicatorLabel(name, 'title')}: surrogate taus`}
                        fileName={`${series.slug}-${name}-surrogates`}
                        legend={`observed ${formatTauDirection(view.kendall[name]?.tau, s.direction)} · p ${formatP(s.p)} of ${s.count}`}
                      >
                        <SurrogateHistogram bins={s.bins} observed={view.kendall[name]?.tau ?? null} />
                      </ChartFrame>
                    );
                  })}
                </div>
              )}
            </Panel>
            <Panel title="Sensitivity to window and bandwidth" id="sensitivity">
              {view.sensitivity ? (
                <SensitivityHeatmap grid={view.sensitivity} indicators={view.indicators} />
              ) : (
                <Empty>
                  {canTune
                    ? 'Tick “Compute the window × bandwidth sensitivity grid” in the tuning panel to see how tau depends on them.'
                    : 'The saved analysis has no sensitivity grid.'}
                </Empty>
              )}
            </Panel>
          </>
        ) : preview.isFetching ? (
          <Loading label="Computing the analysis…" />
        ) : (
          <Empty>This series has not been analysed yet. Charts appear after the next analysis run{canTune ? ' or once a preview is computed' : ''}.</Empty>
        )}
      </div>
      <aside className="space-y-4">
        {canTune ? (
          <Panel title="Tuning" id="tuning">
            <TuningPanel draft={draft} onChange={setDraft} />
            {canSave && changed ? <ReasonField className="mt-4" value={reason} onChange={setReason} required /> : null}
            <div className="mt-4 flex flex-wrap gap-2">
              {canSave ? (
                <Button variant="primary" disabled={!changed || !reason.trim() || save.isPending} onClick={() => save.mutate(draft)}>
                  {save.isPending ? 'Saving…' : 'Save settings'}
                </Button>
              ) : (
                <p className="text-xs text-ink-soft">A lead saves settings for the whole team.</p>
              )}
              <Button disabled={!changed} onClick={() => setDraft(saved)}>
                Back to saved
              </Button>
            </div>
            {save.isError ? <ErrorNote error={save.error}>Not saved.</ErrorNote> : null}
            {save.isSuccess && !changed ? (
              <p role="status" className="mt-2 text-sm text-calm">
                ✓ Saved. The next analysis run uses these settings.
              </p>
            ) : null}
          </Panel>
        ) : null}
        <Panel title="Charts shown" id="charts">
          <ChartChooser available={['record', 'residuals', ...(view?.indicators ?? [])]} chosen={charts} onChange={setCharts} />
        </Panel>
        <Panel title="Exports" id="exports">
          <div className="flex flex-wrap gap-2">
            <a className={linkButton} href={`/api/series/${series.slug}/indicators?format=csv`} download>
              Indicators (CSV)
            </a>
            <a className={linkButton} href={`/api/series/${series.slug}/indicators?format=json`} download>
              Indicators (JSON)
            </a>
            <Link className={linkButton} href={`/series/${series.slug}/report`}>
              One-page report
            </Link>
          </div>
          {canTune && changed ? (
            <div className="mt-2 flex flex-wrap gap-2">
              {(['csv', 'json'] as const).map((format) => (
                <Button
                  key={format}
                  onClick={() =>
                    downloadPosted(series.slug, draft, format).then(
                      () => setExportError(null),
                      (e: Error) => setExportError(e.message),
                    )
                  }
                >
                  Preview indicators ({format.toUpperCase()})
                </Button>
              ))}
            </div>
          ) : null}
          {exportError ? <ErrorNote>{exportError}</ErrorNote> : null}
          <p className="mt-2 text-xs text-ink-soft">Each chart saves itself as SVG or PNG from its own buttons.</p>
        </Panel>
        <Panel title="Data quality" id="quality">
          {quality}
        </Panel>
        <Panel title="Settings history" id="history">
          <SettingsHistory slug={series.slug} initial={history} timeZone={series.timeZone} />
        </Panel>
      </aside>
    </div>
  );
}
