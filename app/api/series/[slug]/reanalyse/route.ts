import { NextResponse } from 'next/server';
import { requireRole } from '@/lib/auth/guard';
import { handle } from '@/lib/http/handler';
import { readJson } from '@/lib/http/body';
import { reanalyseSeries } from '@/lib/analysis/reanalysis';
import { reanalysisRequestSchema } from '@/lib/schemas/analysis';
import { findSeriesBySlug } from '@/lib/series/registry';

/**
 * POST (lead+) `{ "version": n }`: analyses the series on data version n with its current settings and marks, and
 * keeps the outcome as a re-analysis (201). It never becomes the live evidence rules judge, even on the current
 * version.
 */
export const POST = handle<{ slug: string }>(async (request, { params }) => {
  const actor = await requireRole('lead');
  const { slug } = await params;
  const series = await findSeriesBySlug(slug);
  const { version } = await readJson(request, reanalysisRequestSchema);
  return NextResponse.json(await reanalyseSeries(series, version, actor), { status: 201 });
});
