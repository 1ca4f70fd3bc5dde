import type { Freshness, SeriesState } from '@/lib/overview';

/** Each badge pairs a symbol and a word with its colour, so meaning never rests on colour alone. */
const base = 'inline-flex items-center gap-1 rounded-full px-2 py-0.5 text-xs font-medium whitespace-nowrap';

const FRESHNESS: Record<Freshness, { symbol: string; label: string; className: string }> = {
  fresh: { symbol: '●', label: 'On time', className: 'bg-calm-light text-calm' },
  late: { symbol: '◷', label: 'Late', className: 'bg-watch-light text-watch' },
  'no-data': { symbol: '○', label: 'No data', className: 'bg-paper text-ink-faint border border-rule' },
};

export function FreshnessBadge({ freshness, title }: { freshness: Freshness; title?: string }) {
  const f = FRESHNESS[freshness];
  return (
    <span className={`${base} ${f.className}`} title={title} data-freshness={freshness}>
      <span aria-hidden="true">{f.symbol}</span>
      {f.label}
    </span>
  );
}

const STATE: Record<SeriesState, { symbol: string; label: string; className: string }> = {
  'not-analysed': { symbol: '…', label: 'Not analysed', className: 'bg-paper text-ink-faint border border-rule' },
  quiet: { symbol: '–', label: 'Quiet', className: 'bg-calm-light text-calm' },
  watch: { symbol: '▲', label: 'Watch', className: 'bg-watch-light text-watch' },
  warning: { symbol: '▲▲', label: 'Warning', className: 'bg-warning-light text-warning' },
  alert: { symbol: '!', label: 'Alert open', className: 'bg-warning text-white' },
};

export const STATE_LABELS: Record<SeriesState, string> = Object.fromEntries(Object.entries(STATE).map(([key, value]) => [key, value.label])) as Record<
  SeriesState,
  string
>;

export function StateBadge({ state, detail }: { state: SeriesState; detail?: string }) {
  const s = STATE[state];
  return (
    <span className={`${base} ${s.className}`} data-state={state}>
      <span aria-hidden="true">{s.symbol}</span>
      {s.label}
      {detail ? <span className="font-normal">· {detail}</span> : null}
    </span>
  );
}

export function SeverityBadge({ severity }: { severity: string }) {
  const warning = severity === 'warning';
  return (
    <span className={`${base} ${warning ? 'bg-warning-light text-warning' : 'bg-watch-light text-watch'}`} data-severity={severity}>
      <span aria-hidden="true">{warning ? '▲▲' : '▲'}</span>
      {warning ? 'Warning' : 'Watch'}
    </span>
  );
}

const ALERT_STATE_LABELS: Record<string, string> = {
  new: 'New',
  acknowledged: 'Acknowledged',
  escalated: 'Escalated',
  confirmed: 'Confirmed',
  dismissed: 'Dismissed',
};

export function AlertStateBadge({ state }: { state: string }) {
  const closed = state === 'confirmed' || state === 'dismissed';
  return (
    <span
      className={`${base} ${closed ? 'bg-paper text-ink-soft border border-rule' : state === 'escalated' ? 'bg-warning-light text-warning' : 'bg-tide-light text-tide-dark'}`}
      data-alert-state={state}
    >
      <span aria-hidden="true">{closed ? '✓' : state === 'escalated' ? '↑' : '○'}</span>
      {ALERT_STATE_LABELS[state] ?? state}
    </span>
  );
}
