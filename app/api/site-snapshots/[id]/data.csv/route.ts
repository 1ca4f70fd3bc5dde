import { requireRole } from '@/lib/auth/guard';
import { siteSnapshotDataCsv } from '@/lib/sites/provenance';
import { handle } from '@/lib/http/handler';
import { csvDownload } from '@/lib/http/csv-download';
import { idParam } from '@/lib/http/params';

/** The common grid a site analysis saw, with its settings and provenance in `#` lines: what a reviewer reproduces it from. */
export const GET = handle<{ id: string }>(async (_request, { params }) => {
  await requireRole('viewer');
  const download = await siteSnapshotDataCsv(idParam((await params).id, 'Site analysis'));
  return csvDownload(download.csv, download.fileName, { 'X-Brinkwatch-Data-Matches': String(download.matches) });
});
