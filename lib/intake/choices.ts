// Browser-safe (type imports only): the upload form shows these, and the reader and request parsing enforce them.
import type { TimeFormat } from './time-formats';

/** Largest CSV or JSON body taken by upload and push; a bigger record belongs in a drop folder, which streams. */
export const INTAKE_BODY_LIMIT = 50 * 1024 * 1024;

export type Delimiter = ',' | ';' | '\t' | '|';

/** The delimiters the reader knows, in the order the upload form offers them. */
export const DELIMITER_LABELS: Record<Delimiter, string> = { ',': 'Comma', ';': 'Semicolon', '\t': 'Tab', '|': 'Pipe' };

/** How each time format reads on the upload form; keyed by the schema's formats, so a new one needs a label. */
export const TIME_FORMAT_LABELS: Record<TimeFormat, string> = {
  iso8601: 'ISO 8601 date-time',
  date: 'Date only (YYYY-MM-DD)',
  'epoch-seconds': 'Epoch seconds',
  'epoch-milliseconds': 'Epoch milliseconds',
  'decimal-year': 'Decimal year',
  'age-years-bp': 'Age, years before 1950',
  'age-kyr-bp': 'Age, thousand years before 1950',
};

/** Longest reason a sender may give with a delivery (a reprocessing note), in characters. */
export const MAX_REASON_LENGTH = 500;
