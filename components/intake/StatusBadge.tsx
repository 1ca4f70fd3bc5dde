import type { IngestRunRecord as RunSummary } from '@/lib/intake/run-record';

const STYLES: Record<RunSummary['status'], string> = {
  succeeded: 'bg-calm-light text-calm',
  rejected: 'bg-warning-light text-warning',
  failed: 'bg-warning-light text-warning',
  running: 'bg-tide-light text-tide-dark',
};
const SYMBOLS: Record<RunSummary['status'], string> = { succeeded: '✓', rejected: '✕', failed: '!', running: '…' };

/** Status as word and symbol, colour only as a help. */
export function StatusBadge({ status, alreadyApplied }: { status: RunSummary['status']; alreadyApplied?: boolean }) {
  return (
    <span className={`inline-flex items-center gap-1 rounded px-2 py-0.5 text-xs font-medium ${STYLES[status]}`}>
      <span aria-hidden="true">{SYMBOLS[status]}</span>
      {alreadyApplied ? 'already applied' : status}
    </span>
  );
}
