import { NextResponse } from 'next/server';
import { requireRole } from '@/lib/auth/guard';
import { handle } from '@/lib/http/handler';
import { readJson } from '@/lib/http/body';
import { previewAnalysis } from '@/lib/analysis/preview';
import { analysisRequestSchema } from '@/lib/schemas/analysis';
import { findSeriesBySlug } from '@/lib/series/registry';

/** POST (analyst+): the analysis with the posted settings, computed on the stored record and not saved. */
export const POST = handle<{ slug: string }>(async (request, { params }) => {
  await requireRole('analyst');
  const { slug } = await params;
  const series = await findSeriesBySlug(slug);
  const { settings } = await readJson(request, analysisRequestSchema);
  return NextResponse.json(await previewAnalysis(series, settings));
});
