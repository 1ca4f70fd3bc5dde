import { requireRole } from '@/lib/auth/guard';
import { snapshotDataCsv } from '@/lib/analysis/provenance';
import { handle } from '@/lib/http/handler';
import { csvDownload } from '@/lib/http/csv-download';
import { idParam } from '@/lib/http/params';

/** The observations an analysis saw, with its settings and provenance in `#` lines: what a reviewer reproduces it from. */
export const GET = handle<{ id: string }>(async (_request, { params }) => {
  await requireRole('viewer');
  const download = await snapshotDataCsv(idParam((await params).id, 'Analysis'));
  return csvDownload(download.csv, download.fileName, { 'X-Brinkwatch-Data-Matches': String(download.matches) });
});
