import type { TIME_FORMATS } from '@/lib/schemas/series';

export type TimeFormat = (typeof TIME_FORMATS)[number];
/**
 * How a time column can be read: one of the series' formats (instants in UTC ms), or `number`, plain numbers with
 * no calendar (a model's time steps, a depth), which only the command line reads, since a stored series holds instants.
 */
export type TimeReading = TimeFormat | 'number';

/**
 * Instants are integer milliseconds since 1970-01-01T00:00:00Z on the proleptic Gregorian calendar without leap
 * seconds (the POSIX / ECMAScript time scale). The limit (about 31.7 million years either side of 1970) keeps
 * deep-time records such as 800 kyr ice cores representable while staying far inside SQLite's 64-bit integers;
 * it is wider than JavaScript's Date (±8.64e15 ms), which is why calendar arithmetic here does not use Date.
 */
export const MAX_ABS_TIME_MS = 1e18;

const DAY_MS = 86_400_000;

/**
 * The reference year of ages "before present": AD 1950, the radiocarbon convention (Stuiver & Polach 1977,
 * Radiocarbon 19(3):355–363). Age 0 BP is 1950-01-01T00:00:00Z; ages grow into the past.
 */
const BP_REFERENCE_YEAR = 1950;

/**
 * Days from 1970-01-01 to the given proleptic Gregorian date, valid for any year.
 * Howard Hinnant, "chrono-Compatible Low-Level Date Algorithms" (days_from_civil). O(1).
 */
export function daysFromCivil(year: number, month: number, day: number): number {
  const y = month <= 2 ? year - 1 : year;
  const era = Math.floor(y / 400);
  const yoe = y - era * 400;
  const mp = (month + 9) % 12;
  const doy = Math.floor((153 * mp + 2) / 5) + day - 1;
  const doe = yoe * 365 + Math.floor(yoe / 4) - Math.floor(yoe / 100) + doy;
  return era * 146097 + doe - 719468;
}

/** Inverse of daysFromCivil (Hinnant's civil_from_days). O(1). */
export function civilFromDays(days: number): [year: number, month: number, day: number] {
  const z = days + 719468;
  const era = Math.floor(z / 146097);
  const doe = z - era * 146097;
  const yoe = Math.floor((doe - Math.floor(doe / 1460) + Math.floor(doe / 36524) - Math.floor(doe / 146096)) / 365);
  const doy = doe - (365 * yoe + Math.floor(yoe / 4) - Math.floor(yoe / 100));
  const mp = Math.floor((5 * doy + 2) / 153);
  const day = doy - Math.floor((153 * mp + 2) / 5) + 1;
  const month = mp < 10 ? mp + 3 : mp - 9;
  return [yoe + era * 400 + (month <= 2 ? 1 : 0), month, day];
}

function isLeapYear(year: number): boolean {
  return (year % 4 === 0 && year % 100 !== 0) || year % 400 === 0;
}

function daysInMonth(year: number, month: number): number {
  return month === 2 ? (isLeapYear(year) ? 29 : 28) : [31, 28, 31, 30, 31, 30, 31, 31, 30, 31, 30, 31][month - 1];
}

/**
 * Decimal year → instant: year Y plus fraction f of that calendar year's own length (365 or 366 days), so 2000.5
 * is 2000-07-02T00:00Z (183 of 366 days). Common practice for decimal dates (e.g. the convention of NOAA's
 * monthly CO2 records); there is no single standard.
 */
export function decimalYearToMs(decimalYear: number): number {
  const year = Math.floor(decimalYear);
  const start = daysFromCivil(year, 1, 1) * DAY_MS;
  const length = (isLeapYear(year) ? 366 : 365) * DAY_MS;
  return Math.round(start + (decimalYear - year) * length);
}

/** An instant's UTC day (days since 1970-01-01) and its time of day; `milli` keeps any fraction of a millisecond. O(1). */
export function clockOf(ms: number): { days: number; hour: number; minute: number; second: number; milli: number } {
  const days = Math.floor(ms / DAY_MS);
  let rest = ms - days * DAY_MS;
  const hour = Math.floor(rest / 3_600_000);
  rest -= hour * 3_600_000;
  const minute = Math.floor(rest / 60_000);
  rest -= minute * 60_000;
  const second = Math.floor(rest / 1000);
  return { days, hour, minute, second, milli: rest - second * 1000 };
}

/** Formats an instant as ISO 8601 UTC with millisecond precision; years outside 0000–9999 use the expanded ±YYYYYY form. */
export function formatInstant(ms: number): string {
  const { days, hour, minute, second, milli: exact } = clockOf(ms);
  const [year, month, day] = civilFromDays(days);
  const milli = Math.round(exact);
  const yearText = year >= 0 && year <= 9999 ? String(year).padStart(4, '0') : (year < 0 ? '-' : '+') + String(Math.abs(year)).padStart(6, '0');
  const two = (n: number) => String(n).padStart(2, '0');
  return `${yearText}-${two(month)}-${two(day)}T${two(hour)}:${two(minute)}:${two(second)}.${String(milli).padStart(3, '0')}Z`;
}

const formatters = new Map<string, Intl.DateTimeFormat>();
const offsetMemo = new Map<string, number>();

/** Offset of `zone` from UTC at instant `utcMs`, in ms, from the platform's IANA database through Intl. */
export function zoneOffsetMs(zone: string, utcMs: number): number {
  if (zone === 'UTC' || zone === 'Etc/UTC') return 0;
  // Offsets change on whole minutes at most, so one look-up per minute and zone serves every row in it.
  const key = `${zone}|${Math.floor(utcMs / 60_000)}`;
  const known = offsetMemo.get(key);
  if (known !== undefined) return known;
  let formatter = formatters.get(zone);
  if (!formatter) {
    formatter = new Intl.DateTimeFormat('en-US', {
      timeZone: zone,
      hourCycle: 'h23',
      era: 'short',
      year: 'numeric',
      month: 'numeric',
      day: 'numeric',
      hour: 'numeric',
      minute: 'numeric',
      second: 'numeric',
    });
    formatters.set(zone, formatter);
  }
  const parts: Record<string, string> = {};
  for (const part of formatter.formatToParts(new Date(utcMs))) parts[part.type] = part.value;
  const year = parts.era === 'BC' || parts.era === 'B' ? 1 - Number(parts.year) : Number(parts.year);
  const local =
    daysFromCivil(year, Number(parts.month), Number(parts.day)) * DAY_MS +
    Number(parts.hour) * 3_600_000 +
    Number(parts.minute) * 60_000 +
    Number(parts.second) * 1000;
  const offset = local - (utcMs - (((utcMs % 1000) + 1000) % 1000));
  if (offsetMemo.size > 200_000) offsetMemo.clear();
  offsetMemo.set(key, offset);
  return offset;
}

/**
 * A wall-clock time in `zone` → instant. Candidate offsets are the zone's offsets a day before and after; a
 * candidate is right when the zone really has that offset at the resulting instant. Two right answers mean the
 * clock was set back (the repeated hour): the EARLIER instant is taken, as RFC 5545 (iCalendar) §3.3.5 and the
 * "compatible" rule of the TC39 Temporal proposal do. No right answer means the time falls in a gap when clocks
 * were put forward: it never existed there, and the row is rejected rather than silently shifted.
 */
export function localToUtc(localMs: number, zone: string): number | null {
  if (zone === 'UTC' || zone === 'Etc/UTC') return localMs;
  const candidates = new Set([zoneOffsetMs(zone, localMs - DAY_MS), zoneOffsetMs(zone, localMs + DAY_MS)]);
  let best: number | null = null;
  for (const offset of candidates) {
    const utc = localMs - offset;
    if (zoneOffsetMs(zone, utc) === offset && (best === null || utc < best)) best = utc;
  }
  return best;
}

export type TimeParse = { ok: true; t: number; offset?: string; local?: boolean } | { ok: false; reason: string };

const fail = (reason: string): TimeParse => ({ ok: false, reason });

/** ISO 8601 extended format (RFC 3339 profile plus date-only, local times and ±YYYYYY years). */
const ISO = /^([+-]\d{6}|\d{4})-(\d{2})-(\d{2})(?:[Tt ](\d{2}):(\d{2})(?::(\d{2})(?:[.,](\d{1,9}))?)?\s*([Zz]|[+-]\d{2}(?::?\d{2})?)?)?$/;
const NUMBER = /^[+-]?(?:\d+\.?\d*|\.\d+)(?:[eE][+-]?\d+)?$/;

function inRange(t: number): TimeParse {
  if (!Number.isFinite(t) || Math.abs(t) > MAX_ABS_TIME_MS) return fail('the instant is outside the supported range (about ±31 million years from 1970)');
  return { ok: true, t };
}

function parseIso(text: string, zone: string): TimeParse {
  const m = ISO.exec(text);
  if (!m) return fail(`"${clip(text)}" is not an ISO 8601 date or date-time (e.g. 2024-03-01T12:00:00Z)`);
  const year = Number(m[1]);
  const month = Number(m[2]);
  const day = Number(m[3]);
  if (month < 1 || month > 12) return fail(`month ${m[2]} does not exist`);
  if (day < 1 || day > daysInMonth(year, month)) return fail(`${m[1]}-${m[2]}-${m[3]} does not exist (that month has ${daysInMonth(year, month)} days)`);
  const dayMs = daysFromCivil(year, month, day) * DAY_MS;
  // A date alone names a calendar day; it is kept at 00:00 UTC so daily records stay exactly 24 h apart across DST changes.
  if (m[4] === undefined) return inRange(dayMs);
  const hour = Number(m[4]);
  const minute = Number(m[5]);
  const second = m[6] === undefined ? 0 : Number(m[6]);
  const fraction = m[7] === undefined ? 0 : Math.round(Number(`0.${m[7]}`) * 1000);
  if (hour === 24 && minute === 0 && second === 0 && fraction === 0) {
    // ISO 8601 allows 24:00 as the end of a day, the same instant as 00:00 of the next.
  } else if (hour > 23 || minute > 59) {
    return fail(`${m[4]}:${m[5]} is not a time of day`);
  } else if (second === 60) {
    return fail('second 60 (a leap second) cannot be stored: instants are kept on the POSIX scale without leap seconds');
  } else if (second > 59) {
    return fail(`second ${m[6]} does not exist`);
  }
  const wall = dayMs + hour * 3_600_000 + minute * 60_000 + second * 1000 + fraction;
  const zoneText = m[8];
  if (zoneText === undefined) {
    if (Math.abs(wall) > 8.6e15) return fail(`${clip(text)} has no UTC offset and is too far from today to place in ${zone}; add an offset`);
    const utc = localToUtc(wall, zone);
    if (utc === null) return fail(`${clip(text)} does not exist in ${zone} (clocks were put forward over it)`);
    const result = inRange(utc);
    return result.ok ? { ...result, local: true } : result;
  }
  let offsetMs = 0;
  let offset = 'Z';
  if (zoneText !== 'Z' && zoneText !== 'z') {
    const sign = zoneText[0] === '-' ? -1 : 1;
    const digits = zoneText.slice(1).replace(':', '');
    const oh = Number(digits.slice(0, 2));
    const om = digits.length > 2 ? Number(digits.slice(2, 4)) : 0;
    if (oh > 23 || om > 59) return fail(`UTC offset ${zoneText} is not valid`);
    offsetMs = sign * (oh * 3_600_000 + om * 60_000);
    offset = offsetMs === 0 ? 'Z' : `${zoneText[0]}${digits.slice(0, 2)}:${digits.length > 2 ? digits.slice(2, 4) : '00'}`;
  }
  const result = inRange(wall - offsetMs);
  return result.ok ? { ...result, offset } : result;
}

function parseNumber(text: string, what: string): number | string {
  if (!NUMBER.test(text)) return `"${clip(text)}" is not a number (${what})`;
  return Number(text);
}

/**
 * One time cell → UTC ms (the number itself for `number`), or the reason it cannot be one. `zone` is the series'
 * IANA zone, used only for ISO times without an offset.
 */
export function parseTime(raw: string, format: TimeReading, zone: string): TimeParse {
  const text = raw.trim();
  if (text === '') return fail('the time is empty');
  switch (format) {
    case 'number': {
      const n = parseNumber(text, 'plain numeric time');
      return typeof n === 'string' ? fail(n) : { ok: true, t: n };
    }
    case 'iso8601':
      return parseIso(text, zone);
    case 'date': {
      if (!/^([+-]\d{6}|\d{4})-\d{2}-\d{2}$/.test(text)) return fail(`"${clip(text)}" is not a date written YYYY-MM-DD`);
      return parseIso(text, zone);
    }
    case 'epoch-seconds':
    case 'epoch-milliseconds': {
      const n = parseNumber(text, format === 'epoch-seconds' ? 'seconds since 1970-01-01 UTC' : 'milliseconds since 1970-01-01 UTC');
      if (typeof n === 'string') return fail(n);
      return inRange(Math.round(format === 'epoch-seconds' ? n * 1000 : n));
    }
    case 'decimal-year': {
      const n = parseNumber(text, 'decimal year, e.g. 1987.25');
      if (typeof n === 'string') return fail(n);
      if (Math.abs(n) > 3e7) return fail('the year is outside the supported range (±30 million years)');
      return inRange(decimalYearToMs(n));
    }
    case 'age-years-bp':
    case 'age-kyr-bp': {
      const n = parseNumber(text, format === 'age-years-bp' ? 'age in years before 1950' : 'age in thousands of years before 1950');
      if (typeof n === 'string') return fail(n);
      const years = format === 'age-kyr-bp' ? n * 1000 : n;
      if (Math.abs(years) > 3e7) return fail('the age is outside the supported range (±30 million years)');
      return inRange(decimalYearToMs(BP_REFERENCE_YEAR - years));
    }
  }
}

/**
 * A best guess at how a column of time cells is written, for the upload preview (the lead confirms it).
 * ISO text is unambiguous; bare numbers are told apart by magnitude: 12–14 digits are epoch milliseconds (2001
 * onwards), 9–11 digits epoch seconds, 1000–2200 decimal years; other positive numbers that grow down the file
 * are ages, in kyr when small.
 */
export function guessTimeFormat(samples: string[]): TimeFormat | null {
  const cells = samples.map((s) => s.trim()).filter((s) => s !== '');
  if (cells.length === 0) return null;
  if (cells.every((c) => /^([+-]\d{6}|\d{4})-\d{2}-\d{2}$/.test(c))) return 'date';
  if (cells.every((c) => ISO.test(c))) return 'iso8601';
  if (!cells.every((c) => NUMBER.test(c))) return null;
  const values = cells.map(Number);
  const magnitude = Math.max(...values.map(Math.abs));
  if (magnitude >= 1e11 && magnitude < 1e14) return 'epoch-milliseconds';
  if (magnitude >= 1e8 && magnitude < 1e11) return 'epoch-seconds';
  if (values.every((v) => v >= 1000 && v <= 2200)) return 'decimal-year';
  const increasing = values.every((v, i) => i === 0 || v >= values[i - 1]);
  if (increasing && values[0] >= 0) return magnitude < 1000 ? 'age-kyr-bp' : 'age-years-bp';
  return 'decimal-year';
}

/** An instant given in a query string: integer epoch milliseconds or ISO 8601 (zone for times without offset). */
export function parseInstantParam(raw: string, zone: string): TimeParse {
  const text = raw.trim();
  if (/^[+-]?\d+$/.test(text)) return inRange(Number(text));
  return parseIso(text, zone);
}

function clip(text: string): string {
  return text.length > 40 ? `${text.slice(0, 37)}...` : text;
}
