import { requireRole } from '@/lib/auth/guard';
import { snapshotDataCsv } from '@/lib/analysis/provenance';
import { handle } from '@/lib/http/handler';
import { idParam } from '@/lib/http/params';

/** The observations an analysis saw, with its settings and provenance in `#` lines: what a reviewer reproduces it from. */
export const GET = handle<{ id: string }>(async (_request, { params }) => {
  await requireRole('viewer');
  const download = await snapshotDataCsv(idParam((await params).id, 'Analysis'));
  return new Response(download.csv, {
    headers: {
      'Content-Type': 'text/csv; charset=utf-8',
      'Content-Disposition': `attachment; filename="${download.fileName}"`,
      'X-Brinkwatch-Data-Matches': String(download.matches),
    },
  });
});
