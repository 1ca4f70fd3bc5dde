/**
 * A problem with the series or the settings that the caller can fix (a long gap, too few points,
 * a non-positive value under a log transform, ...). The message names what is wrong and where;
 * `at` carries the instant(s) involved so a caller (the CLI) can map them back to input lines.
 */
export class AnalysisInputError extends Error {
  readonly at: { time?: number; index?: number } | undefined;

  constructor(message: string, at?: { time?: number; index?: number }) {
    super(message);
    this.name = 'AnalysisInputError';
    this.at = at;
  }
}
