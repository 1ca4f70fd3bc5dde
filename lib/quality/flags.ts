/**
 * The QARTOD flag scale (U.S. IOOS, Manual for Real-Time Quality Control, every variable's manual uses the same
 * primary flags): 1 pass, 2 not evaluated, 3 suspect (of high interest or questionable), 4 fail, 9 missing.
 * Browser-safe: charts and forms read the labels from here.
 */
export const FLAG_PASS = 1;
export const FLAG_NOT_EVALUATED = 2;
export const FLAG_SUSPECT = 3;
export const FLAG_FAIL = 4;
export const FLAG_MISSING = 9;

export const QARTOD_FLAGS = [FLAG_PASS, FLAG_NOT_EVALUATED, FLAG_SUSPECT, FLAG_FAIL, FLAG_MISSING] as const;
export type QartodFlag = (typeof QARTOD_FLAGS)[number];

export const FLAG_LABELS: Record<QartodFlag, string> = {
  1: 'pass',
  2: 'not evaluated',
  3: 'suspect',
  4: 'fail',
  9: 'missing',
};

/**
 * What can set a flag: the file's own flag column, one of the automatic tests, or an analyst. Stored by name in
 * `observations.flag_test`; in memory as the 1-based position in this list (0: nothing set it).
 */
export const FLAG_SETTERS = ['source', 'gross-range', 'spike', 'rate-of-change', 'flat-line', 'sampling-interval', 'analyst'] as const;
export type FlagSetter = (typeof FLAG_SETTERS)[number];

/** What set a flag, in words (the test names as the QARTOD manuals give them); `none`: nothing judged the point. */
export const SETTER_LABELS: Record<FlagSetter | 'none', string> = {
  source: 'the source’s own flag',
  'gross-range': 'gross range test',
  spike: 'spike test',
  'rate-of-change': 'rate of change test',
  'flat-line': 'flat line test',
  'sampling-interval': 'sampling interval test',
  analyst: 'an analyst',
  none: 'no test',
};

export function setterCode(setter: FlagSetter): number {
  return FLAG_SETTERS.indexOf(setter) + 1;
}

export function setterName(code: number): FlagSetter | null {
  return code > 0 ? FLAG_SETTERS[code - 1] : null;
}

export function isQartodFlag(n: number): n is QartodFlag {
  return n === 1 || n === 2 || n === 3 || n === 4 || n === 9;
}

/**
 * Severity order used to combine the flags of several tests into one: not evaluated < pass < suspect < fail <
 * missing, so the point's flag is its most severe test result, and "not evaluated" only when no test judged it
 * (common practice for QARTOD aggregate flags).
 */
const SEVERITY: Record<number, number> = { 2: 0, 1: 1, 3: 2, 4: 3, 9: 4 };

export function moreSevere(a: number, b: number): boolean {
  return (SEVERITY[a] ?? 0) > (SEVERITY[b] ?? 0);
}

/** Flags that never enter an analysis: fail and missing. Suspect enters unless the series' QC settings say not. */
export function flagsLeftOut(suspectInAnalysis: boolean): number[] {
  return suspectInAnalysis ? [FLAG_FAIL, FLAG_MISSING] : [FLAG_SUSPECT, FLAG_FAIL, FLAG_MISSING];
}

/** A point flagged suspect, fail or missing, as the record chart draws it (a shape per flag, not a colour alone). */
export interface FlaggedPoint {
  t: number;
  value: number;
  flag: QartodFlag;
  test: FlagSetter | null;
}

/** The shape each flag is drawn with on the record chart, and the words of its legend. */
export const FLAG_SHAPES: Partial<Record<QartodFlag, { symbol: string; label: string }>> = {
  3: { symbol: '▲', label: 'suspect' },
  4: { symbol: '✕', label: 'fail (left out of the analysis)' },
  9: { symbol: '○', label: 'missing (left out of the analysis)' },
};
