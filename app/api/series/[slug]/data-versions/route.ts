import { NextResponse } from 'next/server';
import { requireRole } from '@/lib/auth/guard';
import { handle } from '@/lib/http/handler';
import { dataVersionsOverview } from '@/lib/analysis/reanalysis';
import { findSeriesBySlug } from '@/lib/series/registry';

/** GET (viewer+): the series' data versions (who, when, why), the version its live analysis read, and its re-analyses. */
export const GET = handle<{ slug: string }>(async (_request, { params }) => {
  await requireRole('viewer');
  const { slug } = await params;
  return NextResponse.json(await dataVersionsOverview(await findSeriesBySlug(slug)));
});
