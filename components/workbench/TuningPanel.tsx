'use client';

import { DETREND_METHODS } from '@/lib/engine/detrend';
import { INDICATOR_NAMES, analysisSettingsSchema, type AnalysisSettings } from '@/lib/engine/settings';
import { PREVIEW_MAX_SURROGATES } from '@/lib/analysis/preview-limits';
import { indicatorLabel } from '@/lib/display/analysis-labels';
import { ExtentInput } from './ExtentInput';

const DETREND_LABELS: Record<string, string> = {
  none: 'None (raw values)',
  linear: 'Straight line',
  gaussian: 'Gaussian kernel smoother',
  'moving-average': 'Centred moving average',
  difference: 'First differences',
  'local-linear': 'Local-linear kernel smoother',
};

/** Detrending methods whose smoothing is set by a kernel bandwidth. */
const KERNEL_METHODS: readonly string[] = ['gaussian', 'local-linear'];

const field = 'mt-1 w-full rounded border border-rule bg-card px-2 py-1.5 text-sm';

/** Whether the settings would accept this value for one field (the schema the server parses with). */
function acceptsField(draft: AnalysisSettings, key: 'window' | 'bandwidth' | 'span') {
  return (value: unknown) => analysisSettingsSchema.safeParse({ ...draft, [key]: value }).success;
}

/** The settings form; every change goes straight to `onChange` (the workbench debounces the recomputation). */
export function TuningPanel({ draft, onChange, disabled }: { draft: AnalysisSettings; onChange: (next: AnalysisSettings) => void; disabled?: boolean }) {
  const set = <K extends keyof AnalysisSettings>(key: K, value: AnalysisSettings[K]) => onChange({ ...draft, [key]: value });
  function toggleIndicator(name: (typeof INDICATOR_NAMES)[number], on: boolean) {
    const next = on ? [...draft.indicators, name] : draft.indicators.filter((n) => n !== name);
    if (next.length)
      set(
        'indicators',
        INDICATOR_NAMES.filter((n) => next.includes(n)),
      );
  }
  return (
    <fieldset disabled={disabled} className="space-y-4" aria-describedby="tuning-help">
      <legend className="sr-only">Analysis settings</legend>
      <p id="tuning-help" className="text-xs text-ink-soft">
        Charts recompute as you change these; nothing is saved until a lead saves.
      </p>
      <label className="block text-sm font-medium">
        Detrending
        <select
          className={field}
          value={draft.detrend}
          onChange={(e) => set('detrend', e.target.value as AnalysisSettings['detrend'])}
          data-testid="detrend-input"
        >
          {DETREND_METHODS.map((m) => (
            <option key={m} value={m}>
              {DETREND_LABELS[m] ?? m}
            </option>
          ))}
        </select>
      </label>
      {KERNEL_METHODS.includes(draft.detrend) ? (
        <ExtentInput
          label="Bandwidth (kernel standard deviation)"
          of="the stretch"
          value={draft.bandwidth}
          accepts={acceptsField(draft, 'bandwidth')}
          onChange={(v) => v !== null && set('bandwidth', v)}
          testId="bandwidth-input"
        />
      ) : null}
      {draft.detrend === 'moving-average' ? (
        <label className="block text-sm font-medium">
          Moving-average width (points, odd)
          <input
            type="number"
            min={3}
            step={2}
            value={draft.movingAverageWidth}
            className={field}
            onChange={(e) => {
              const v = Math.max(3, Math.round(Number(e.target.value)));
              set('movingAverageWidth', v % 2 ? v : v + 1);
            }}
          />
        </label>
      ) : null}
      <ExtentInput
        label="Rolling window"
        of="the stretch"
        value={draft.window}
        accepts={acceptsField(draft, 'window')}
        onChange={(v) => v !== null && set('window', v)}
        testId="window-input"
        valueTestId="window-value"
      />
      <ExtentInput
        label="Analysis span (latest part of the record)"
        of="the record"
        value={draft.span}
        nullable
        accepts={acceptsField(draft, 'span')}
        onChange={(v) => set('span', v)}
        testId="span-input"
      />
      <label className="flex items-center gap-2 text-sm">
        <input
          type="checkbox"
          checked={draft.shiftDetection === 'on'}
          onChange={(e) => set('shiftDetection', e.target.checked ? 'on' : 'off')}
          className="accent-tide"
          data-testid="shift-detection-input"
        />
        Start the analysis after a detected abrupt shift
      </label>
      <label className="block text-sm font-medium">
        Least observed share per window: <span className="num">{Math.round(draft.minCoverage * 100)}%</span>
        <input
          type="range"
          min={0.5}
          max={1}
          step={0.05}
          value={draft.minCoverage}
          aria-valuetext={`${Math.round(draft.minCoverage * 100)}%`}
          onChange={(e) => set('minCoverage', Number(e.target.value))}
          className="mt-1 w-full accent-tide"
          data-testid="min-coverage-input"
        />
        <span className="mt-1 block text-xs font-normal text-ink-soft">Windows with fewer observed (not interpolated) points are not judged.</span>
      </label>
      <label className="block text-sm font-medium">
        When the sampling interval changes
        <select
          className={field}
          value={draft.samplingChange}
          onChange={(e) => set('samplingChange', e.target.value as AnalysisSettings['samplingChange'])}
          data-testid="sampling-change-input"
        >
          <option value="start-after">Analyse only the stretch after the change</option>
          <option value="subsample">Subsample the finer part to the coarser interval</option>
        </select>
      </label>
      <fieldset>
        <legend className="text-sm font-medium">Indicators</legend>
        <div className="mt-1 grid grid-cols-1 gap-1 sm:grid-cols-2">
          {INDICATOR_NAMES.map((name) => (
            <label key={name} className="flex items-center gap-2 text-sm">
              <input
                type="checkbox"
                checked={draft.indicators.includes(name)}
                onChange={(e) => toggleIndicator(name, e.target.checked)}
                className="accent-tide"
              />
              {indicatorLabel(name, 'title')}
            </label>
          ))}
        </div>
      </fieldset>
      <label className="block text-sm font-medium">
        Seasonal cycle removal
        <select className={field} value={draft.seasonal} onChange={(e) => set('seasonal', e.target.value as AnalysisSettings['seasonal'])}>
          <option value="none">None</option>
          <option value="month">Monthly means</option>
          <option value="day-of-year">Day-of-year means</option>
        </select>
      </label>
      <label className="block text-sm font-medium">
        Surrogate series for significance
        <input
          type="number"
          min={0}
          max={100000}
          step={1}
          value={draft.surrogates}
          className={field}
          onChange={(e) => set('surrogates', Math.max(0, Math.round(Number(e.target.value) || 0)))}
        />
        <span className="mt-1 block text-xs font-normal text-ink-soft">
          The live preview uses at most {PREVIEW_MAX_SURROGATES}; saved settings use the full number.
        </span>
      </label>
      <label className="block text-sm font-medium">
        Most windows per costly indicator
        <input
          type="number"
          min={10}
          max={1_000_000}
          step={1}
          value={draft.maxEvaluatedWindows}
          className={field}
          onChange={(e) => set('maxEvaluatedWindows', Math.min(1_000_000, Math.max(10, Math.round(Number(e.target.value) || 10))))}
          data-testid="max-evaluated-windows-input"
        />
        <span className="mt-1 block text-xs font-normal text-ink-soft">
          Indicators computed from each window&apos;s residuals (restoring rate, spectral ratio and the others beyond the moments) are evaluated at no more than
          this many evenly spaced windows, always the latest; their Kendall tau is taken over those.
        </span>
      </label>
      <label className="flex items-center gap-2 text-sm">
        <input
          type="checkbox"
          checked={draft.sensitivity}
          onChange={(e) => set('sensitivity', e.target.checked)}
          className="accent-tide"
          data-testid="sensitivity-input"
        />
        Compute the window × bandwidth sensitivity grid
      </label>
    </fieldset>
  );
}
