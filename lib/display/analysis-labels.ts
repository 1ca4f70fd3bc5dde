import type { RuleDirection, TrendDirection } from '@/lib/engine/direction';
import type { AnalysisResult } from '@/lib/engine/analyze';
import type { AnalysisSettings, IndicatorName } from '@/lib/engine/settings';
import type { SiteIndicatorName } from '@/lib/engine/site';
import type { AlertKind } from '@/models/Alert';
import { formatTau } from './format';

/**
 * Words for the direction an indicator's trend is tested in and for where an analysed stretch starts, shared by
 * the charts, the tuning panel and the quality panel so every screen says them alike. Pure; browser-safe.
 */

/** What each kind of alert is, in a few words, as queues, the site page and mails name an alert without an indicator. */
export const ALERT_KIND_WORDS: Record<AlertKind, string> = {
  'slowing-down': 'slowing down',
  'abrupt-shift': 'abrupt shift',
  'data-late': 'data late',
  'site-slowing-down': 'slowing down across a site',
};

/**
 * Plain-language names of the indicators, as they read inside a sentence (mails, alert pages); keyed by the
 * engine's names (the series indicators and the site-level ones), so a new indicator without a label fails the type check.
 */
export const INDICATOR_LABELS: Record<IndicatorName | SiteIndicatorName, string> = {
  variance: 'variance',
  sd: 'standard deviation',
  cv: 'coefficient of variation',
  ac1: 'lag-1 autocorrelation',
  skewness: 'skewness',
  kurtosis: 'kurtosis',
  recovery: 'recovery rate',
  'restoring-rate': 'restoring rate (regression)',
  'spectral-ratio': 'spectral ratio (low/high frequency)',
  ch: 'conditional heteroskedasticity',
  dfa: 'fluctuation exponent (DFA)',
  bimodality: 'bimodality coefficient',
  'potential-wells': 'wells of the fitted potential',
  'pc1-variance': 'variance along the first principal component',
  'pc1-share': 'share of variance along the first principal component',
  'maf-ac1': 'lag-1 autocorrelation of the first maximum-autocorrelation factor',
};

/**
 * The label of an indicator named by stored data (a rule, an alert), or the name itself when the engine does not
 * know it; `title` starts it with a capital, as chart titles and form labels do.
 */
export function indicatorLabel(name: string, form: 'sentence' | 'title' = 'sentence'): string {
  const label = Object.hasOwn(INDICATOR_LABELS, name) ? INDICATOR_LABELS[name as IndicatorName | SiteIndicatorName] : name;
  return form === 'title' ? label.charAt(0).toUpperCase() + label.slice(1) : label;
}

/** How a direction reads in words (mails, alert pages) — the one place they are written. */
export const DIRECTION_WORDS: Record<TrendDirection | RuleDirection, string> = {
  rising: 'rising',
  falling: 'falling',
  'two-sided': 'either way',
  either: 'either way',
};
const DIRECTION_ARROWS: Record<TrendDirection | RuleDirection, string> = { rising: '↑', falling: '↓', 'two-sided': '↕', either: '↕' };

/** "rising ↑", "falling ↓" or "either way ↕". */
export function formatDirection(direction: TrendDirection | RuleDirection): string {
  return `${DIRECTION_WORDS[direction]} ${DIRECTION_ARROWS[direction]}`;
}

/**
 * Tau with the direction it is tested in, e.g. "τ = 0.62, tested rising ↑": the direction is the one slowing down
 * would move the indicator (recovery falls, variance and ac1 rise), not the sign of tau, so a tau against it
 * ("τ = −0.30, tested rising ↑") reads as evidence against slowing down.
 */
export function formatTauDirection(tau: number | null | undefined, direction: TrendDirection): string {
  return `τ = ${formatTau(tau)}, tested ${formatDirection(direction)}`;
}

const STRETCH_REASONS: Record<AnalysisResult['stretch']['startsAfter'], string> = {
  'record-start': 'the start of the record',
  shift: 'a detected abrupt shift',
  'tipping-point': 'a marked tipping point',
  maintenance: 'a maintenance break',
  sampling: 'a change of sampling interval',
  span: 'the start of the analysis span',
  gap: 'a gap too long to fill',
};

/** Why the analysed stretch starts where it does, e.g. "analysed since a detected abrupt shift". */
export function stretchReason(startsAfter: AnalysisResult['stretch']['startsAfter']): string {
  return `analysed since ${STRETCH_REASONS[startsAfter] ?? startsAfter}`;
}

/** How a window, bandwidth or span reads: "50% of the stretch" for a fraction, else as given ("500 points", "P90D"). */
export function describeExtent(extent: AnalysisSettings['window'] | null, of: string): string {
  if (extent === null) return 'the whole record';
  return typeof extent === 'number' ? `${Math.round(extent * 100)}% of ${of}` : extent;
}
