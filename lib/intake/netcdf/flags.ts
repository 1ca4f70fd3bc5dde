import { FLAG_FAIL, FLAG_MISSING, FLAG_NOT_EVALUATED, FLAG_PASS, FLAG_SUSPECT, isQartodFlag, type QartodFlag } from '@/lib/quality/flags';
import { numberAttribute, textAttribute, type NetcdfVariable } from './dataset';
import { NetcdfFileError } from './errors';

/**
 * The QARTOD flag names (U.S. IOOS, Manual for Real-Time Quality Control, the primary flags: Pass, Not Evaluated,
 * Suspect or Of High Interest, Fail, Missing Data) as CF flag_meanings words (blank-separated, words joined by
 * underscores; case ignored).
 */
const QARTOD_MEANINGS: Record<string, QartodFlag> = {
  pass: FLAG_PASS,
  passed: FLAG_PASS,
  not_evaluated: FLAG_NOT_EVALUATED,
  suspect: FLAG_SUSPECT,
  high_interest: FLAG_SUSPECT,
  of_high_interest: FLAG_SUSPECT,
  suspect_or_of_high_interest: FLAG_SUSPECT,
  suspect_or_high_interest: FLAG_SUSPECT,
  fail: FLAG_FAIL,
  failed: FLAG_FAIL,
  missing: FLAG_MISSING,
  missing_data: FLAG_MISSING,
};

/** A flag variable's values → QARTOD flags; `describe` says how the table was made, for the run's notes. */
export interface FlagTable {
  flagOf(raw: number): QartodFlag | null;
  describe: string;
}

/**
 * How a flag variable's values read on the QARTOD scale (CF 1.x §3.5 "Flags": flag_values paired in order with the
 * words of flag_meanings). By meaning, when every meaning is a QARTOD flag name; else by value, when the values are
 * QARTOD's own numbers (1, 2, 3, 4, 9) and no meaning contradicts its number; a variable without flag_values is
 * read as QARTOD numbers, as a CSV flag column is. Anything else — bit masks (flag_masks), other schemes such as
 * Argo's 0–9 — is refused with the meanings named, since guessing which of them mean "fail" could let bad data in.
 */
export function qartodFlagTable(variable: NetcdfVariable): FlagTable {
  const name = variable.name;
  if (variable.attributes.has('flag_masks')) {
    throw new NetcdfFileError(
      'unknown-flags',
      `The flag variable "${name}" uses flag_masks (bit flags), which Brinkwatch does not read; it reads QARTOD flags (1, 2, 3, 4, 9).`,
    );
  }
  const values = numberAttribute(variable, 'flag_values')?.numbers ?? null;
  const meanings = (textAttribute(variable, 'flag_meanings') ?? '').trim().split(/\s+/).filter(Boolean);
  if (!values) {
    return { flagOf: (raw) => (isQartodFlag(raw) ? raw : null), describe: `"${name}" read as QARTOD flag numbers` };
  }
  if (meanings.length && meanings.length !== values.length) {
    throw new NetcdfFileError(
      'unknown-flags',
      `The flag variable "${name}" has ${values.length} flag_values but ${meanings.length} flag_meanings; CF pairs them one to one.`,
    );
  }
  const byMeaning = meanings.map((meaning) => QARTOD_MEANINGS[meaning.toLowerCase()] ?? null);
  const table = new Map<number, QartodFlag>();
  if (meanings.length && byMeaning.every((flag) => flag !== null)) {
    values.forEach((value, i) => table.set(value, byMeaning[i]!));
    return { flagOf: (raw) => table.get(raw) ?? null, describe: `"${name}" read by its flag_meanings (${meanings.join(', ')})` };
  }
  const contradicts = byMeaning.some((flag, i) => flag !== null && flag !== values[i]);
  if (!values.some((value) => !isQartodFlag(value)) && !contradicts) {
    return {
      flagOf: (raw) => (values.includes(raw) && isQartodFlag(raw) ? raw : null),
      describe: `"${name}" read by its flag_values, which are QARTOD's numbers`,
    };
  }
  throw new NetcdfFileError(
    'unknown-flags',
    `The flag variable "${name}" does not use QARTOD flags (flag_values ${values.join(', ')}${meanings.length ? `, flag_meanings ${meanings.join(' ')}` : ''}). Brinkwatch reads flags whose meanings are QARTOD's (pass, not_evaluated, suspect, fail, missing_data) or whose values are QARTOD's 1, 2, 3, 4, 9.`,
  );
}
