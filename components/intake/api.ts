export interface RunSummary {
  id: number;
  /** the series' zone comes with the run once the API gives it (lib/intake/runs.ts); until then times read in UTC */
  series: { slug: string; name: string; timeZone?: string } | null;
  source: 'drop' | 'upload' | 'push';
  fileName: string | null;
  status: 'running' | 'succeeded' | 'rejected' | 'failed';
  rowsRead: number;
  accepted: number;
  duplicates: number;
  replaced: number;
  rejected: number;
  message: string;
  alreadyApplied: boolean;
  durationMs: number | null;
  startedAt: string;
}

export interface RejectedRow {
  line: number;
  column: string | null;
  reason: string;
}

export const formatDuration = (ms: number | null) => (ms === null ? '—' : ms < 1000 ? `${ms} ms` : `${(ms / 1000).toFixed(1)} s`);
export const formatCount = (n: number) => n.toLocaleString('en-GB');
