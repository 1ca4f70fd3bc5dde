import { NextResponse } from 'next/server';
import { requireRole } from '@/lib/auth/guard';
import { handle } from '@/lib/http/handler';
import { readJson, readQuery } from '@/lib/http/body';
import { flaggedQuerySchema, flagOverrideSchema } from '@/lib/schemas/quality';
import { findSeriesBySlug } from '@/lib/series/registry';
import { flaggedPoints, overrideFlags } from '@/lib/quality/records';

/** An analyst's override of the flags in a time range: { from, to, flag: 1 | 3 | 4, reason } (audited). */
export const POST = handle<{ slug: string }>(async (request, { params }) => {
  const actor = await requireRole('analyst');
  const series = await findSeriesBySlug((await params).slug);
  const body = await readJson(request, flagOverrideSchema);
  return NextResponse.json(await overrideFlags(series, body, actor));
});

/** The points of ?from=&to= (epoch ms) flagged suspect, fail or missing, for the record chart. */
export const GET = handle<{ slug: string }>(async (request, { params }) => {
  await requireRole('viewer');
  const series = await findSeriesBySlug((await params).slug);
  const query = readQuery(request, flaggedQuerySchema);
  return NextResponse.json(await flaggedPoints(series.id, query.from, query.to, query.limit));
});
