/** Fetches JSON from our API and turns the error contract into an Error carrying the server's message. */
export async function fetchJson<T>(url: string, init?: RequestInit): Promise<T> {
  const response = await fetch(url, init);
  const body = await response.json().catch(() => null);
  if (!response.ok) {
    const message = body?.error?.message ?? body?.message ?? `Request failed (${response.status}).`;
    throw Object.assign(new Error(message), { status: response.status, body });
  }
  return body as T;
}

export interface RunSummary {
  id: number;
  series: { slug: string; name: string } | null;
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
