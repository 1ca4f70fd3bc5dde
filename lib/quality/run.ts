import type { QcConfig } from '@/lib/schemas/quality';
import { FLAG_NOT_EVALUATED, moreSevere, setterCode, type FlagSetter } from './flags';
import { flatLineTest } from './flat-line';
import { grossRangeTest } from './gross-range';
import { rateOfChangeTest } from './rate-of-change';
import { samplingIntervalTest } from './sampling-interval';
import { spikeTest } from './spike';

export interface PointFlags {
  /** QARTOD flag per point */
  flag: Uint8Array;
  /** what set it: 1-based position in FLAG_SETTERS, 0 for nothing */
  setter: Uint8Array;
}

/**
 * Runs the configured tests over a record in time order and combines their results with the source's flags into
 * one flag per point: the most severe (lib/quality/flags.ts), named after the first setter that gave it (the source
 * first, then the tests in the order below). `sourceFlag` holds 0 where the file gave none. Without any test or
 * source flag every point is 2 (not evaluated). Cost: the sum of the tests', O(n) each but the flat line
 * O(n · REP_CNT_FAIL).
 */
export function runQualityTests(
  time: Float64Array,
  value: Float64Array,
  config: QcConfig | null,
  options: { intervalMs?: number | null; sourceFlag?: Uint8Array } = {},
): PointFlags {
  const n = time.length;
  const flag = new Uint8Array(n).fill(FLAG_NOT_EVALUATED);
  const setter = new Uint8Array(n);
  const apply = (name: FlagSetter, result: Uint8Array) => {
    const code = setterCode(name);
    for (let i = 0; i < n; i++) {
      if (result[i] && moreSevere(result[i], flag[i])) {
        flag[i] = result[i];
        setter[i] = code;
      } else if (result[i] && result[i] === flag[i] && setter[i] === 0 && result[i] !== FLAG_NOT_EVALUATED) {
        setter[i] = code;
      }
    }
  };
  if (options.sourceFlag) apply('source', options.sourceFlag);
  if (!config) return { flag, setter };
  if (config.grossRange) apply('gross-range', grossRangeTest(value, config.grossRange.fail, config.grossRange.suspect));
  if (config.spike) apply('spike', spikeTest(value, config.spike.suspect, config.spike.fail));
  if (config.rateOfChange) apply('rate-of-change', rateOfChangeTest(time, value, config.rateOfChange.deviations, config.rateOfChange.periodHours * 3_600_000));
  if (config.flatLine) apply('flat-line', flatLineTest(value, config.flatLine.tolerance, config.flatLine.suspect, config.flatLine.fail));
  const expectedMs = config.samplingInterval?.expectedSeconds !== undefined ? config.samplingInterval.expectedSeconds * 1000 : options.intervalMs;
  if (config.samplingInterval && expectedMs) apply('sampling-interval', samplingIntervalTest(time, expectedMs, config.samplingInterval.tolerance));
  return { flag, setter };
}
