import type { RuleDirection } from '@/lib/engine/direction';
import { DIRECTION_WORDS } from '@/lib/display/analysis-labels';
import { formatP, formatTau, formatUtc } from '@/lib/display/format';

/** A tau with the direction it is judged in, e.g. "−0.62 (falling)". Every tau shown goes through this. */
export function tauWithDirection(tau: number | null | undefined, direction: string | null | undefined): string {
  const words = DIRECTION_WORDS[(direction ?? 'rising') as RuleDirection] ?? direction;
  return `${formatTau(tau)} (${words})`;
}

/** A rule's tau threshold in words, e.g. "tau ≤ −0.3 (falling)", "|tau| ≥ 0.3 (either way)". */
export function tauThreshold(minTau: number, direction: string): string {
  if (direction === 'falling') return `tau ≤ ${formatTau(-minTau)} (falling)`;
  if (direction === 'either') return `|tau| ≥ ${formatTau(minTau)} (either way)`;
  return `tau ≥ ${formatTau(minTau)} (rising)`;
}

/** The Kendall p only ever appears with this label: it assumes independent values, which overlapping windows are not. */
export function kendallPLabel(p: number | null | undefined): string {
  return `${formatP(p)} (descriptive; assumes independent values)`;
}

export interface CalibrationLine {
  falseAlarmsPerYear: number | null;
  interval: [number, number] | null;
  surrogates: number;
  finishedAt: string;
}

/** The calibrated false-alarm rate of a rule in one line, or "not yet calibrated". */
export function describeCalibration(c: CalibrationLine | null | undefined): string {
  if (!c) return 'not yet calibrated';
  if (c.falseAlarmsPerYear === null) return `not available (calibration of ${formatUtc(new Date(c.finishedAt))} gave no judged time)`;
  const rate = c.falseAlarmsPerYear.toPrecision(2);
  const interval = c.interval ? `, 95% interval ${c.interval[0].toPrecision(2)}–${c.interval[1].toPrecision(2)}` : '';
  return `${rate} false alarms per year${interval} (live procedure replayed on ${c.surrogates} surrogates, ${formatUtc(new Date(c.finishedAt))})`;
}
