// Client-safe (type imports only): the intake screens and the workbench's quality panel import this shape.
import type { IngestSource, IngestStatus } from '@/models/IngestRun';

/** One ingest run as the API and the screens carry it (times as ISO 8601 strings); `presentRun` builds it. */
export interface IngestRunRecord {
  id: number;
  /** with its time zone, so every time of the run reads in the series' zone */
  series: { slug: string; name: string; timeZone: string } | null;
  source: IngestSource;
  fileName: string | null;
  contentHash: string | null;
  status: IngestStatus;
  rowsRead: number;
  accepted: number;
  duplicates: number;
  replaced: number;
  rejected: number;
  message: string;
  /** the same content had already been taken in; nothing new was stored */
  alreadyApplied: boolean;
  durationMs: number | null;
  userId: number | null;
  tokenId: number | null;
  startedAt: string;
  finishedAt: string | null;
}
