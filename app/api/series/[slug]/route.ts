import { NextResponse } from 'next/server';
import { requireRole } from '@/lib/auth/guard';
import { handle } from '@/lib/http/handler';
import { readJson } from '@/lib/http/body';
import { seriesUpdateSchema } from '@/lib/schemas/series';
import { fetchSeriesDetail, presentSeries, updateSeries } from '@/lib/series/registry';

export const GET = handle<{ slug: string }>(async (request, { params }) => {
  await requireRole('viewer');
  const { slug } = await params;
  return NextResponse.json(await fetchSeriesDetail(slug));
});

export const PATCH = handle<{ slug: string }>(async (request, { params }) => {
  const actor = await requireRole('lead');
  const { slug } = await params;
  const patch = await readJson(request, seriesUpdateSchema);
  return NextResponse.json(presentSeries(await updateSeries(slug, patch, actor)));
});
