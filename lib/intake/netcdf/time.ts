import { daysFromCivil } from '@/lib/intake/time-formats';
import { NetcdfFileError } from './errors';

const DAY_MS = 86_400_000;

/**
 * Time units CF allows (CF Conventions 1.x §4.4 "Time Coordinate": the UDUNITS time units day (d), hour (hr, h),
 * minute (min) and second (sec, s), plural forms also acceptable), in milliseconds. Months and years are refused:
 * UDUNITS defines them as fractions of a mean tropical year, which §4.4 advises against; no calendar date falls out.
 */
const UNIT_MS: Record<string, number> = {
  day: DAY_MS,
  days: DAY_MS,
  d: DAY_MS,
  hour: 3_600_000,
  hours: 3_600_000,
  hr: 3_600_000,
  hrs: 3_600_000,
  h: 3_600_000,
  minute: 60_000,
  minutes: 60_000,
  min: 60_000,
  mins: 60_000,
  second: 1000,
  seconds: 1000,
  sec: 1000,
  secs: 1000,
  s: 1000,
  millisecond: 1,
  milliseconds: 1,
  msec: 1,
  ms: 1,
};

/**
 * Calendars read (CF 1.x §4.4.1 "Calendar"; values are case-insensitive):
 * - standard/gregorian (mixed Julian–Gregorian, switching after 1582-10-04 to 1582-10-15), proleptic_gregorian and
 *   julian name real days: the reference date is turned into a day number in its calendar and the elapsed time
 *   added, so the instant is exact.
 * - noleap/365_day and all_leap/366_day are model calendars: each value is turned into its date in that calendar,
 *   and the reading is stored at the same date and time of day (a noleap date always exists; an all_leap 29
 *   February of a common year does not, and that reading is rejected).
 * Not read: 360_day (30 February and 31st days have no date), none, utc and tai (leap seconds), and any other.
 */
export type SupportedCalendar = 'standard' | 'proleptic_gregorian' | 'julian' | 'noleap' | 'all_leap';
const CALENDARS: Record<string, SupportedCalendar> = {
  standard: 'standard',
  gregorian: 'standard',
  proleptic_gregorian: 'proleptic_gregorian',
  julian: 'julian',
  noleap: 'noleap',
  '365_day': 'noleap',
  all_leap: 'all_leap',
  '366_day': 'all_leap',
};

export interface TimeUnits {
  unitMs: number;
  calendar: SupportedCalendar;
  /** the reference date and time of day as written (in its own calendar), and its zone offset in ms */
  year: number;
  month: number;
  day: number;
  timeOfDayMs: number;
  offsetMs: number;
}

/** UDUNITS reference times: "1950-01-01", "1990-1-1 0:0:0", "2000-01-01T00:00:00Z", "1992-10-8 15:15:42.5 -6:00". */
const REFERENCE = /^(\d{1,4})-(\d{1,2})-(\d{1,2})(?:[T ]+(\d{1,2}):(\d{1,2})(?::(\d{1,2}(?:\.\d*)?))?)?\s*(Z|UTC|GMT|[+-]\d{1,2}(?::?\d{2})?)?$/i;

/** Parses a time coordinate's `units` and `calendar` attributes; unsupported units or calendars throw, naming them. */
export function parseTimeUnits(units: string, calendarAttribute: string | null, variable: string): TimeUnits {
  const calendarName = (calendarAttribute ?? 'standard').trim().toLowerCase();
  const calendar = CALENDARS[calendarName];
  if (!calendar) {
    throw new NetcdfFileError(
      'unsupported-calendar',
      `The time variable "${variable}" uses the calendar "${calendarAttribute}", which Brinkwatch does not read (it reads standard, gregorian, proleptic_gregorian, julian, noleap, 365_day, all_leap and 366_day).`,
    );
  }
  const match = /^\s*([A-Za-z]+)\s+since\s+(.+?)\s*$/i.exec(units);
  if (!match) {
    throw new NetcdfFileError(
      'unsupported-units',
      `The time variable "${variable}" has units "${units}"; CF time units read "<unit> since <date>" (e.g. "days since 1950-01-01").`,
    );
  }
  const unitMs = UNIT_MS[match[1].toLowerCase()];
  if (unitMs === undefined) {
    const word = match[1].toLowerCase();
    const why = /^(months?|years?|yr|a|common_years?)$/.test(word)
      ? 'months and years are not fixed lengths of time (CF 1.x §4.4 advises against them)'
      : 'it is not a UDUNITS time unit';
    throw new NetcdfFileError(
      'unsupported-units',
      `The time variable "${variable}" counts in "${match[1]}": ${why}. Brinkwatch reads days, hours, minutes, seconds and milliseconds since a date.`,
    );
  }
  const reference = REFERENCE.exec(match[2]);
  if (!reference) {
    throw new NetcdfFileError(
      'unsupported-units',
      `The reference time "${match[2]}" of the time variable "${variable}" is not a date Brinkwatch reads (e.g. 1950-01-01 00:00:00).`,
    );
  }
  const [year, month, day, hour, minute] = reference.slice(1, 6).map((part) => Number(part ?? 0));
  const second = Number(reference[6] ?? 0);
  if (year < 1 || month < 1 || month > 12 || day < 1 || day > 31 || hour > 23 || minute > 59 || second >= 60) {
    throw new NetcdfFileError(
      'unsupported-units',
      `The reference time "${match[2]}" of the time variable "${variable}" is not a valid date (years from 1 on).`,
    );
  }
  return { unitMs, calendar, year, month, day, timeOfDayMs: hour * 3_600_000 + minute * 60_000 + second * 1000, offsetMs: zoneOffset(reference[7]) };
}

function zoneOffset(zone: string | undefined): number {
  if (!zone || /^(Z|UTC|GMT)$/i.test(zone)) return 0;
  const [, sign, hours, minutes] = /^([+-])(\d{1,2}):?(\d{2})?$/.exec(zone)!;
  return (sign === '-' ? -1 : 1) * (Number(hours) * 3_600_000 + Number(minutes ?? 0) * 60_000);
}

/** Days from 1970-01-01 to a date of the Julian calendar (Julian day number JDN − 2,440,588; Meeus, Astronomical Algorithms, ch. 7). */
function daysFromJulian(year: number, month: number, day: number): number {
  const a = Math.floor((14 - month) / 12);
  const y = year + 4800 - a;
  const m = month + 12 * a - 3;
  return day + Math.floor((153 * m + 2) / 5) + 365 * y + Math.floor(y / 4) - 32083 - 2440588;
}

const COMMON = [31, 28, 31, 30, 31, 30, 31, 31, 30, 31, 30, 31];
const LEAP = [31, 29, 31, 30, 31, 30, 31, 31, 30, 31, 30, 31];

/** A model calendar whose years all have the same months (noleap: 365 days, all_leap: 366). */
class FixedYear {
  readonly length: number;
  private readonly starts: number[] = [];
  constructor(readonly months: number[]) {
    this.length = months.reduce((a, b) => a + b, 0);
    let sum = 0;
    for (const days of months) {
      this.starts.push(sum);
      sum += days;
    }
  }
  dayNumber(year: number, month: number, day: number): number {
    return year * this.length + this.starts[month - 1] + day - 1;
  }
  date(dayNumber: number): [number, number, number] {
    const year = Math.floor(dayNumber / this.length);
    const dayOfYear = dayNumber - year * this.length;
    let month = 11;
    while (this.starts[month] > dayOfYear) month--;
    return [year, month + 1, dayOfYear - this.starts[month] + 1];
  }
}
const NOLEAP = new FixedYear(COMMON);
const ALL_LEAP = new FixedYear(LEAP);

function isGregorianLeap(year: number): boolean {
  return (year % 4 === 0 && year % 100 !== 0) || year % 400 === 0;
}

/** Decoded instants (ms, whole) with the reason a value has none: NaN at that position, its reason in `problems`. */
export interface DecodedTimes {
  t: Float64Array;
  problems: Map<number, string>;
}

/**
 * Turns time coordinate values into instants (integer ms since 1970-01-01T00:00:00Z, proleptic Gregorian, no leap
 * seconds), rounded to the nearest millisecond. `missing` marks values that are the variable's fill value. O(n).
 */
export function decodeTimes(values: Float64Array, units: TimeUnits, missing: (i: number) => boolean): DecodedTimes {
  const t = new Float64Array(values.length);
  const problems = new Map<number, string>();
  const { calendar, unitMs } = units;
  const fail = (i: number, reason: string) => {
    t[i] = Number.NaN;
    problems.set(i, reason);
  };
  if (calendar === 'noleap' || calendar === 'all_leap') {
    const model = calendar === 'noleap' ? NOLEAP : ALL_LEAP;
    if (units.day > model.months[units.month - 1]) throw badReference(units, calendar);
    const origin = model.dayNumber(units.year, units.month, units.day) * DAY_MS + units.timeOfDayMs;
    for (let i = 0; i < values.length; i++) {
      if (missing(i) || !Number.isFinite(values[i])) {
        fail(i, 'the time is missing (fill value)');
        continue;
      }
      const elapsed = Math.round(origin + values[i] * unitMs);
      const dayNumber = Math.floor(elapsed / DAY_MS);
      const [year, month, day] = model.date(dayNumber);
      if (month === 2 && day === 29 && !isGregorianLeap(year)) {
        fail(i, `${year}-02-29 of the ${calendar} calendar is not a date of the real calendar`);
        continue;
      }
      t[i] = daysFromCivil(year, month, day) * DAY_MS + (elapsed - dayNumber * DAY_MS) - units.offsetMs;
    }
    return { t, problems };
  }
  const origin = referenceDays(units) * DAY_MS + units.timeOfDayMs - units.offsetMs;
  for (let i = 0; i < values.length; i++) {
    if (missing(i) || !Number.isFinite(values[i])) fail(i, 'the time is missing (fill value)');
    else t[i] = Math.round(origin + values[i] * unitMs);
  }
  return { t, problems };
}

function monthLength(julian: boolean, year: number, month: number): number {
  return month === 2 ? ((julian ? year % 4 === 0 : isGregorianLeap(year)) ? 29 : 28) : COMMON[month - 1];
}

/** The reference date as days from 1970-01-01, read in its calendar (standard: Julian before 1582-10-15). */
function referenceDays(units: TimeUnits): number {
  const { year, month, day, calendar } = units;
  const code = year * 10_000 + month * 100 + day;
  if (calendar === 'standard' && code > 15821004 && code < 15821015) {
    throw new NetcdfFileError(
      'unsupported-units',
      `The reference date ${year}-${month}-${day} does not exist in the standard calendar (1582-10-05 to 1582-10-14 were skipped).`,
    );
  }
  const julian = calendar === 'julian' || (calendar === 'standard' && code < 15821015);
  if (day > monthLength(julian, year, month)) throw badReference(units, calendar);
  return julian ? daysFromJulian(year, month, day) : daysFromCivil(year, month, day);
}

function badReference(units: TimeUnits, calendar: string): NetcdfFileError {
  return new NetcdfFileError('unsupported-units', `The reference date ${units.year}-${units.month}-${units.day} does not exist in the ${calendar} calendar.`);
}
