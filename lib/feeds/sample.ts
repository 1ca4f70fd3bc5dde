// Browser-safe: what the feed form makes of a sample station file before anything is sent.

/** A sample file's columns and first rows, as the feed form shows them. */
export interface FeedSample {
  columns: string[];
  rows: string[][];
}

/** Column names that usually hold the time of a station file's rows (common practice of logger exports). */
const TIME_NAME = /^(time|date|datetime|date_time|timestamp|utc|time_utc|iso_time)$/i;
/** Column names that usually hold a variable's quality flag: `<variable>_qc`, `<variable>_flag`, `qc_<variable>`. */
const FLAG_NAME = /^(?:(.+?)[_ ](?:qc|flag|flags|qartod)|qc[_ ](.+))$/i;

/** The column most likely to be the time column: by name, else the first. */
export function guessTimeColumn(columns: string[]): string {
  return columns.find((name) => TIME_NAME.test(name.trim())) ?? columns[0] ?? '';
}

/** For each value column, the flag column that names it (`temp` → `temp_qc`), when the file has one. */
export function guessFlagColumns(columns: string[]): Record<string, string> {
  const found: Record<string, string> = {};
  for (const name of columns) {
    const match = FLAG_NAME.exec(name.trim());
    const variable = match?.[1] ?? match?.[2];
    const target = variable ? columns.find((c) => c.toLowerCase() === variable.toLowerCase()) : undefined;
    if (target) found[target] = name;
  }
  return found;
}
