import { NextResponse } from 'next/server';
import { requireRole } from '@/lib/auth/guard';
import { listMarks } from '@/lib/marks/read';
import { createMark } from '@/lib/marks/write';
import { readJson } from '@/lib/http/body';
import { handle } from '@/lib/http/handler';
import { markCreateSchema } from '@/lib/schemas/backtest';
import { findSeriesBySlug } from '@/lib/series/registry';
import { MARK_KINDS } from '@/lib/marks/kinds';

export const GET = handle<{ slug: string }>(async (_request, { params }) => {
  await requireRole('viewer');
  const series = await findSeriesBySlug((await params).slug);
  return NextResponse.json({ marks: await listMarks(series.id, MARK_KINDS) });
});

/** Marks a marked tipping point or a maintenance break: { at: ISO 8601 or epoch ms, note, kind?: 'tipping-point' | 'maintenance' }. */
export const POST = handle<{ slug: string }>(async (request, { params }) => {
  const actor = await requireRole('lead');
  const series = await findSeriesBySlug((await params).slug);
  const body = await readJson(request, markCreateSchema);
  return NextResponse.json(await createMark(series.id, body, actor), { status: 201 });
});
