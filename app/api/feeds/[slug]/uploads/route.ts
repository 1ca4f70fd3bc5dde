import { NextResponse } from 'next/server';
import { requireRole } from '@/lib/auth/guard';
import { handle } from '@/lib/http/handler';
import { ServiceUnavailableError } from '@/lib/http/errors';
import { findFeedBySlug } from '@/lib/feeds/registry';
import { ingestFeedFile } from '@/lib/feeds/intake';
import { readIntakeBody, storedDelivery } from '@/lib/intake/request-body';

/** Takes an uploaded station file (multipart `file`, or `text/csv`) through a feed: every series in one transaction. */
export const POST = handle<{ slug: string }>(async (request, { params }) => {
  const actor = await requireRole('lead');
  const feed = await findFeedBySlug((await params).slug);
  const body = await readIntakeBody(request, { allowJson: false });
  const delivery = storedDelivery(body);
  const outcome = await ingestFeedFile({
    feed,
    source: 'upload',
    fileName: body.fileName,
    contentHash: delivery.contentHash,
    csv: body.csv!,
    actor,
    reason: delivery.reason,
    duplicatePolicy: delivery.duplicatePolicy,
  });
  if (outcome.status === 'failed') throw new ServiceUnavailableError('The file could not be stored just now; nothing was stored. Try again.');
  return NextResponse.json(outcome, { status: outcome.status === 'succeeded' ? 200 : 422 });
});
