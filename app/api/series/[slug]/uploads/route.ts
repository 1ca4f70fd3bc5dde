import { NextResponse } from 'next/server';
import { requireRole } from '@/lib/auth/guard';
import { handle } from '@/lib/http/handler';
import { ServiceUnavailableError } from '@/lib/http/errors';
import { findSeriesBySlug } from '@/lib/series/registry';
import { ingestObservations } from '@/lib/intake/pipeline';
import { readIntakeBody } from '@/lib/intake/request-body';

/** Commits an uploaded CSV through the intake pipeline with the mapping chosen on the preview. */
export const POST = handle<{ slug: string }>(async (request, { params }) => {
  const actor = await requireRole('lead');
  const { slug } = await params;
  const series = await findSeriesBySlug(slug);
  const body = await readIntakeBody(request, { allowJson: false });
  const outcome = await ingestObservations({
    series,
    source: 'upload',
    fileName: body.fileName,
    contentHash: body.contentHash,
    csv: body.csv,
    mapping: body.mapping,
    actor,
    reason: body.reason,
  });
  if (outcome.status === 'failed') throw new ServiceUnavailableError('The file could not be stored just now; nothing was stored. Try again.');
  return NextResponse.json(outcome, { status: outcome.status === 'succeeded' ? 200 : 422 });
});
