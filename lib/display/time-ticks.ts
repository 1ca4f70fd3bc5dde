import { civilFromDays, daysFromCivil, localToUtc, zoneOffsetMs } from '@/lib/intake/time-formats';

const MINUTE_MS = 60_000;
const HOUR_MS = 3_600_000;
const DAY_MS = 86_400_000;
/** JavaScript's Date (and so Intl's time zones) ends here; deep-time records beyond it are labelled in UTC. */
const DATE_LIMIT_MS = 8.64e15;
/** 1970-01-05 was a Monday: weekly ticks fall on Mondays, as ISO 8601 weeks begin. */
const FIRST_MONDAY_DAY = 4;

type TickUnit = 'minute' | 'hour' | 'day' | 'month' | 'year';

interface Step {
  unit: TickUnit;
  count: number;
  /** average length, to pick the step; ticks themselves fall on calendar boundaries */
  approxMs: number;
}

const YEAR_COUNTS = Array.from({ length: 8 }, (_, k) => [1, 2, 5].map((m) => m * 10 ** k)).flat();
const STEPS: Step[] = [
  ...[1, 5, 15, 30].map((count) => ({ unit: 'minute' as const, count, approxMs: count * MINUTE_MS })),
  ...[1, 3, 6, 12].map((count) => ({ unit: 'hour' as const, count, approxMs: count * HOUR_MS })),
  ...[1, 2, 7, 14].map((count) => ({ unit: 'day' as const, count, approxMs: count * DAY_MS })),
  ...[1, 3, 6].map((count) => ({ unit: 'month' as const, count, approxMs: count * 30.436875 * DAY_MS })),
  ...YEAR_COUNTS.map((count) => ({ unit: 'year' as const, count, approxMs: count * 365.2425 * DAY_MS })),
];

export interface TimeTick {
  t: number;
  label: string;
}

const two = (n: number) => String(n).padStart(2, '0');

/**
 * Time-axis ticks on calendar boundaries of the series' own time zone: whole years (1-2-5 × 10ᵏ, so deep-time
 * records get 100 000-year ticks), quarters or months, Mondays or days, and hours or minutes of the local clock.
 * The step is the finest with at most `target` ticks over [from, to]; a tick is the UTC instant of that local
 * boundary (through the zone's offsets, so 00:00 on a clock-change day is still 00:00 local), and local times that
 * do not exist (a spring-forward gap) are skipped. Years use ISO 8601's astronomical numbering (0 = 1 BC).
 * Labels: `2024`, `2024-05`, `2024-05-13`, `05-13 06:00`. O(target) plus one offset look-up per tick.
 */
export function calendarTicks(from: number, to: number, timeZone: string, target = 7): TimeTick[] {
  if (!Number.isFinite(from) || !Number.isFinite(to) || to <= from) return [];
  const zone = Math.max(Math.abs(from), Math.abs(to)) < DATE_LIMIT_MS ? timeZone : 'UTC';
  const span = to - from;
  const step = STEPS.find((s) => span / s.approxMs <= target) ?? STEPS[STEPS.length - 1];
  const local = (t: number) => t + zoneOffsetMs(zone, t);
  const start = local(from);
  const end = local(to);
  const boundaries: { local: number; label: string }[] = [];

  if (step.unit === 'minute' || step.unit === 'hour') {
    const stepMs = step.count * (step.unit === 'minute' ? MINUTE_MS : HOUR_MS);
    for (let l = Math.ceil(start / stepMs) * stepMs; l <= end; l += stepMs) {
      const [, month, day] = civilFromDays(Math.floor(l / DAY_MS));
      const ofDay = l - Math.floor(l / DAY_MS) * DAY_MS;
      boundaries.push({ local: l, label: `${two(month)}-${two(day)} ${two(Math.floor(ofDay / HOUR_MS))}:${two(Math.floor((ofDay % HOUR_MS) / MINUTE_MS))}` });
    }
  } else if (step.unit === 'day') {
    const phase = step.count >= 7 ? FIRST_MONDAY_DAY : 0;
    let d = Math.ceil(start / DAY_MS);
    d += (((phase - d) % step.count) + step.count) % step.count;
    for (; d * DAY_MS <= end; d += step.count) {
      const [year, month, day] = civilFromDays(d);
      boundaries.push({ local: d * DAY_MS, label: `${year}-${two(month)}-${two(day)}` });
    }
  } else if (step.unit === 'month') {
    const [y0, m0] = civilFromDays(Math.floor(start / DAY_MS));
    let index = y0 * 12 + (m0 - 1);
    if (start > daysFromCivil(y0, m0, 1) * DAY_MS) index++;
    index += ((-index % step.count) + step.count) % step.count;
    for (; ; index += step.count) {
      const year = Math.floor(index / 12);
      const month = index - year * 12 + 1;
      const l = daysFromCivil(year, month, 1) * DAY_MS;
      if (l > end) break;
      boundaries.push({ local: l, label: `${year}-${two(month)}` });
    }
  } else {
    const [y0] = civilFromDays(Math.floor(start / DAY_MS));
    let year = y0 + (start > daysFromCivil(y0, 1, 1) * DAY_MS ? 1 : 0);
    year += ((-year % step.count) + step.count) % step.count;
    for (; daysFromCivil(year, 1, 1) * DAY_MS <= end; year += step.count) {
      boundaries.push({ local: daysFromCivil(year, 1, 1) * DAY_MS, label: String(year) });
    }
  }

  const ticks: TimeTick[] = [];
  for (const boundary of boundaries) {
    const t = localToUtc(boundary.local, zone);
    if (t !== null && t >= from && t <= to) ticks.push({ t, label: boundary.label });
  }
  return ticks;
}
