import { NextResponse } from 'next/server';
import { requireRole } from '@/lib/auth/guard';
import { requireIngestWriter } from '@/lib/intake/writer';
import { handle } from '@/lib/http/handler';
import { csvDownload } from '@/lib/http/csv-download';
import { readQuery } from '@/lib/http/body';
import { ServiceUnavailableError, UnprocessableError } from '@/lib/http/errors';
import { observationQuerySchema } from '@/lib/schemas/observation';
import { findSeriesBySlug } from '@/lib/series/registry';
import { loadFlaggedObservations } from '@/lib/analysis/observations';
import { observationsCsvStream } from '@/lib/intake/export';
import { ingestObservations } from '@/lib/intake/pipeline';
import { readIntakeBody } from '@/lib/intake/request-body';
import { formatInstant } from '@/lib/intake/time-formats';
import { queryRange } from '@/lib/http/range';

export const GET = handle<{ slug: string }>(async (request, { params }) => {
  await requireRole('viewer');
  const { slug } = await params;
  const query = readQuery(request, observationQuerySchema);
  const series = await findSeriesBySlug(slug);
  const range = { ...queryRange(query, series.timeZone), limit: query.limit };
  if (query.format === 'csv') {
    return csvDownload(observationsCsvStream(series.id, range), `${series.slug}.csv`);
  }
  const { time, value, flag } = await loadFlaggedObservations(series.id, { ...range, limit: range.limit ?? 100_000 });
  const items = new Array(time.length);
  for (let i = 0; i < time.length; i++) items[i] = { time: formatInstant(time[i]), t: time[i], value: value[i], flag: flag[i] };
  return NextResponse.json({ slug: series.slug, unit: series.unit, count: items.length, items });
});

export const POST = handle<{ slug: string }>(async (request, { params }) => {
  const { slug } = await params;
  const writer = await requireIngestWriter(request, slug);
  const body = await readIntakeBody(request, { allowJson: true });
  // A station's token must not overrule the series' duplicate policy; reprocessed data come as a lead's upload.
  if (body.duplicatePolicy) {
    throw new UnprocessableError('Some fields are not valid.', {
      duplicatePolicy: ['A push keeps the series’ duplicate policy; send reprocessed data as an upload.'],
    });
  }
  const outcome = await ingestObservations({
    series: writer.series,
    source: 'push',
    fileName: body.fileName,
    csv: body.csv,
    points: body.points,
    mapping: body.mapping,
    actor: writer.actor,
    tokenId: writer.tokenId,
    reason: body.reason,
  });
  const rejected = outcome.rejectedRows.map(({ line, column, reason }) => ({ line, column, reason }));
  if (outcome.status === 'failed') throw new ServiceUnavailableError('The points could not be stored just now; nothing was stored. Send them again.');
  if (outcome.status !== 'succeeded') {
    const fields: Record<string, string[]> = {};
    for (const row of rejected.slice(0, 100)) (fields[`line.${row.line}`] ??= []).push(row.reason);
    throw new UnprocessableError(outcome.message, Object.keys(fields).length ? fields : undefined);
  }
  return NextResponse.json({
    runId: outcome.runId,
    accepted: outcome.accepted,
    duplicates: outcome.duplicates,
    replaced: outcome.replaced,
    rejected,
    flagged: outcome.flagged,
    flaggedBy: outcome.flaggedBy,
    message: outcome.message,
  });
});
