import { formatLocal, formatUtc } from '@/lib/display/format';

/** An instant in the series' time zone; the UTC instant on hover (title) and in the machine-readable attribute. */
export function LocalTime({ t, timeZone, withZone = false }: { t: number | string | Date | null | undefined; timeZone: string; withZone?: boolean }) {
  if (t === null || t === undefined) return <span className="text-ink-faint">–</span>;
  const ms = typeof t === 'number' ? t : new Date(t).getTime();
  if (!Number.isFinite(ms)) return <span className="text-ink-faint">–</span>;
  return (
    <time dateTime={new Date(ms).toISOString()} title={formatUtc(ms)} className="num whitespace-nowrap">
      {formatLocal(ms, timeZone, withZone)}
    </time>
  );
}
