import { FLAG_FAIL, FLAG_PASS, FLAG_SUSPECT } from './flags';

/**
 * QARTOD gross range test: flag 4 (fail) when xₙ < SENSOR_MIN or xₙ > SENSOR_MAX (what the sensor can report at
 * all), else flag 3 (suspect) when xₙ < USER_MIN or xₙ > USER_MAX (the operator's plausible range), else 1 (pass).
 * The limits themselves pass. Cost O(n). Source: U.S. IOOS QARTOD manuals, "Gross Range Test" (e.g. the
 * temperature and salinity manual, test 9; test numbering from memory).
 */
export function grossRangeTest(value: Float64Array, fail: readonly [number, number], suspect?: readonly [number, number]): Uint8Array {
  const flags = new Uint8Array(value.length);
  const [failMin, failMax] = fail;
  const [userMin, userMax] = suspect ?? fail;
  for (let i = 0; i < value.length; i++) {
    const x = value[i];
    flags[i] = x < failMin || x > failMax ? FLAG_FAIL : x < userMin || x > userMax ? FLAG_SUSPECT : FLAG_PASS;
  }
  return flags;
}
