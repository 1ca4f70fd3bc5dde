'use client';

import { DETREND_METHODS } from '@/lib/engine/detrend';
import { INDICATOR_NAMES, type AnalysisSettings } from '@/lib/engine/settings';
import { PREVIEW_MAX_SURROGATES } from '@/lib/analysis/preview-limits';
import { INDICATOR_LABELS } from './AnalysisCharts';

const DETREND_LABELS: Record<string, string> = {
  none: 'None (raw values)',
  linear: 'Straight line',
  gaussian: 'Gaussian kernel smoother',
  'moving-average': 'Centred moving average',
  difference: 'First differences',
};

const field = 'mt-1 w-full rounded border border-rule bg-card px-2 py-1.5 text-sm';
const pct = (v: number) => `${Math.round(v * 100)}%`;

/** The settings form; every change goes straight to `onChange` (the workbench debounces the recomputation). */
export function TuningPanel({ draft, onChange, disabled }: { draft: AnalysisSettings; onChange: (next: AnalysisSettings) => void; disabled?: boolean }) {
  const set = <K extends keyof AnalysisSettings>(key: K, value: AnalysisSettings[K]) => onChange({ ...draft, [key]: value });
  function toggleIndicator(name: (typeof INDICATOR_NAMES)[number], on: boolean) {
    const next = on ? [...draft.indicators, name] : draft.indicators.filter((n) => n !== name);
    if (next.length) set('indicators', INDICATOR_NAMES.filter((n) => next.includes(n)));
  }
  return (
    <fieldset disabled={disabled} className="space-y-4" aria-describedby="tuning-help">
      <legend className="sr-only">Analysis settings</legend>
      <p id="tuning-help" className="text-xs text-ink-soft">Charts recompute as you change these; nothing is saved until a lead saves.</p>
      <label className="block text-sm font-medium">
        Detrending
        <select className={field} value={draft.detrend} onChange={(e) => set('detrend', e.target.value as AnalysisSettings['detrend'])} data-testid="detrend-input">
          {DETREND_METHODS.map((m) => <option key={m} value={m}>{DETREND_LABELS[m] ?? m}</option>)}
        </select>
      </label>
      {draft.detrend === 'gaussian' ? (
        <label className="block text-sm font-medium">
          Bandwidth: <span className="num">{pct(draft.bandwidth)}</span> of the record
          <input type="range" min={0.02} max={0.5} step={0.01} value={draft.bandwidth} aria-valuetext={pct(draft.bandwidth)}
            onChange={(e) => set('bandwidth', Number(e.target.value))} className="mt-1 w-full accent-tide" data-testid="bandwidth-input" />
        </label>
      ) : null}
      {draft.detrend === 'moving-average' ? (
        <label className="block text-sm font-medium">
          Moving-average width (points, odd)
          <input type="number" min={3} step={2} value={draft.movingAverageWidth} className={field}
            onChange={(e) => {
              const v = Math.max(3, Math.round(Number(e.target.value)));
              set('movingAverageWidth', v % 2 ? v : v + 1);
            }} />
        </label>
      ) : null}
      <label className="block text-sm font-medium">
        Rolling window: <span className="num" data-testid="window-value">{pct(draft.window)}</span> of the record
        <input type="range" min={0.1} max={0.9} step={0.05} value={draft.window} aria-valuetext={pct(draft.window)}
          onChange={(e) => set('window', Number(e.target.value))} className="mt-1 w-full accent-tide" data-testid="window-input" />
      </label>
      <fieldset>
        <legend className="text-sm font-medium">Indicators</legend>
        <div className="mt-1 grid grid-cols-1 gap-1 sm:grid-cols-2">
          {INDICATOR_NAMES.map((name) => (
            <label key={name} className="flex items-center gap-2 text-sm">
              <input type="checkbox" checked={draft.indicators.includes(name)} onChange={(e) => toggleIndicator(name, e.target.checked)} className="accent-tide" />
              {INDICATOR_LABELS[name] ?? name}
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
        <input type="number" min={0} max={100000} step={1} value={draft.surrogates} className={field}
          onChange={(e) => set('surrogates', Math.max(0, Math.round(Number(e.target.value) || 0)))} />
        <span className="mt-1 block text-xs font-normal text-ink-soft">The live preview uses at most {PREVIEW_MAX_SURROGATES}; saved settings use the full number.</span>
      </label>
      <label className="flex items-center gap-2 text-sm">
        <input type="checkbox" checked={draft.sensitivity} onChange={(e) => set('sensitivity', e.target.checked)} className="accent-tide" data-testid="sensitivity-input" />
        Compute the window × bandwidth sensitivity grid
      </label>
    </fieldset>
  );
}
