export interface RejectedRow {
  line: number;
  column: string | null;
  reason: string;
}

export const formatDuration = (ms: number | null) => (ms === null ? '—' : ms < 1000 ? `${ms} ms` : `${(ms / 1000).toFixed(1)} s`);
export const formatCount = (n: number) => n.toLocaleString('en-GB');
