import { NextResponse } from 'next/server';
import { requireRole } from '@/lib/auth/guard';
import { handle } from '@/lib/http/handler';
import { ServiceUnavailableError } from '@/lib/http/errors';
import { findSeriesBySlug } from '@/lib/series/registry';
import { ingestObservations } from '@/lib/intake/pipeline';
import { readIntakeBody, storedDelivery } from '@/lib/intake/request-body';

/**
 * Commits an uploaded CSV through the intake pipeline with the mapping chosen on the preview; `duplicatePolicy:
 * replace` with a `reason` makes it a reprocessing upload whose values replace the stored ones.
 */
export const POST = handle<{ slug: string }>(async (request, { params }) => {
  const actor = await requireRole('lead');
  const { slug } = await params;
  const series = await findSeriesBySlug(slug);
  const body = await readIntakeBody(request, { allowJson: false });
  const delivery = storedDelivery(body);
  const outcome = await ingestObservations({
    series,
    source: 'upload',
    fileName: body.fileName,
    contentHash: delivery.contentHash,
    csv: body.csv,
    mapping: body.mapping,
    actor,
    reason: delivery.reason,
    duplicatePolicy: delivery.duplicatePolicy,
  });
  if (outcome.status === 'failed') throw new ServiceUnavailableError('The file could not be stored just now; nothing was stored. Try again.');
  return NextResponse.json(outcome, { status: outcome.status === 'succeeded' ? 200 : 422 });
});
