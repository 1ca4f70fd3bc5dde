import { loadObservations } from '@/lib/analysis/observations';
import { runAnalysis } from '@/lib/engine/analyze';
import { AnalysisInputError } from '@/lib/engine/errors';
import type { AnalysisSettings } from '@/lib/engine/settings';
import { UnprocessableError } from '@/lib/http/errors';
import type { Series } from '@/models';
import { PREVIEW_MAX_SURROGATES } from './preview-limits';
import { seriesBreaks } from './snapshot';
import { viewFromResult, type AnalysisView } from './view';

/** Caps the cost of a what-if run so one request cannot occupy the server. */
export function boundedSettings(settings: AnalysisSettings): AnalysisSettings {
  return { ...settings, surrogates: Math.min(settings.surrogates, PREVIEW_MAX_SURROGATES) };
}

/**
 * Runs the engine on a series' stored record (up to `to`, default all) with the given settings and the series'
 * marks as breaks, exactly as the live analysis does. Nothing is saved. Input the settings cannot handle (too
 * short, gaps) becomes a 422 the form can show.
 */
export async function analyseStored(series: Series, settings: AnalysisSettings, options: { to?: number } = {}) {
  const [{ time, value }, breaks] = await Promise.all([loadObservations(series.id, { to: options.to }), seriesBreaks(series.id, { to: options.to ?? null })]);
  try {
    return await runAnalysis({ time, value, intervalMs: series.intervalMs === null ? undefined : Number(series.intervalMs), breaks }, settings, {
      parallel: false,
    });
  } catch (error) {
    if (error instanceof AnalysisInputError) throw new UnprocessableError(error.message);
    throw error;
  }
}

/** A what-if analysis for the tuning panel: chart-ready, thinned to ≤ 2,000 points, surrogates capped. */
export async function previewAnalysis(series: Series, requested: AnalysisSettings): Promise<AnalysisView> {
  const settings = boundedSettings(requested);
  const result = await analyseStored(series, settings);
  return viewFromResult(result, settings);
}
