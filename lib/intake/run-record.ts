// Client-safe (type imports only): the intake screens and the workbench's quality panel import these shapes.
import type { IngestSource, IngestStatus } from '@/models/IngestRun';
import type { RejectedRow } from './rows';

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

/** What committing an upload would do (the preview's summary; `previewObservations` builds it); times in epoch ms. */
export interface PreviewSummary {
  rowsRead: number;
  wouldAccept: number;
  wouldBeDuplicates: number;
  wouldReplace: number;
  conflicts: number;
  rejected: number;
  rejectedRows: RejectedRow[];
  first: number | null;
  last: number | null;
  notes: string[];
}
