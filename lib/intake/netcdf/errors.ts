/** What is wrong with a netCDF file as a whole; nothing in it is stored. */
export type NetcdfErrorCode =
  | 'not-netcdf'
  | 'unsupported-format'
  | 'too-large'
  | 'truncated'
  | 'damaged'
  | 'no-time'
  | 'unsupported-units'
  | 'unsupported-calendar'
  | 'variable-needed'
  | 'missing-variable'
  | 'not-on-time'
  | 'not-numeric'
  | 'unknown-flags';

/** A problem with a netCDF file as a whole, reported per file in the run's report (as CsvFileError is for a CSV). */
export class NetcdfFileError extends Error {
  constructor(
    readonly code: NetcdfErrorCode,
    message: string,
    /** the file's data variables, when the problem is which one to read (the upload form offers them) */
    readonly variables?: string[],
  ) {
    super(message);
    this.name = 'NetcdfFileError';
  }
}
