import { NextResponse } from 'next/server';
import { requireRole } from '@/lib/auth/guard';
import { handle } from '@/lib/http/handler';
import { findSeriesBySlug } from '@/lib/series/registry';
import { previewObservations } from '@/lib/intake/pipeline';
import { readIntakeBody } from '@/lib/intake/request-body';

/** What committing this CSV would do; nothing is stored. */
export const POST = handle<{ slug: string }>(async (request, { params }) => {
  await requireRole('lead');
  const { slug } = await params;
  const series = await findSeriesBySlug(slug);
  const body = await readIntakeBody(request, { allowJson: false });
  return NextResponse.json({ fileName: body.fileName, ...(await previewObservations(series, body.csv!, body.mapping, body.duplicatePolicy)) });
});
