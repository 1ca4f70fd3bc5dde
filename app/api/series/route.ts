import { NextResponse } from 'next/server';
import { requireRole } from '@/lib/auth/guard';
import { handle } from '@/lib/http/handler';
import { readJson, readQuery } from '@/lib/http/body';
import { seriesCreateSchema, seriesListQuerySchema } from '@/lib/schemas/series';
import { createSeries, listSeries, presentSeries } from '@/lib/series/registry';

export const GET = handle(async (request) => {
  await requireRole('viewer');
  const { retired, find, limit } = readQuery(request, seriesListQuerySchema);
  const series = await listSeries({ includeRetired: retired === 'include', find, limit });
  return NextResponse.json({ items: series.map(presentSeries) });
});

export const POST = handle(async (request) => {
  const actor = await requireRole('lead');
  const input = await readJson(request, seriesCreateSchema);
  const series = await createSeries(input, actor);
  return NextResponse.json(presentSeries(series), { status: 201 });
});
