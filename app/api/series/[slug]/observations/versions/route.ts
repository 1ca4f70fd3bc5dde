import { NextResponse } from 'next/server';
import { requireRole } from '@/lib/auth/guard';
import { handle } from '@/lib/http/handler';
import { readQuery } from '@/lib/http/body';
import { queryRange } from '@/lib/http/range';
import { observationQuerySchema } from '@/lib/schemas/observation';
import { findSeriesBySlug } from '@/lib/series/registry';
import { observationVersions } from '@/lib/intake/versions';

/** Earlier values of points that reprocessed data replaced, with the run that replaced them (?from=&to=&limit=). */
export const GET = handle<{ slug: string }>(async (request, { params }) => {
  await requireRole('viewer');
  const series = await findSeriesBySlug((await params).slug);
  const query = readQuery(request, observationQuerySchema);
  const items = await observationVersions(series.id, { ...queryRange(query, series.timeZone), limit: query.limit });
  return NextResponse.json({ slug: series.slug, count: items.length, items });
});
