import { NextResponse } from 'next/server';
import { requireRole } from '@/lib/auth/guard';
import { listTransitions } from '@/lib/backtest/marks';
import { markTransition } from '@/lib/backtest/transitions';
import { readJson } from '@/lib/http/body';
import { handle } from '@/lib/http/handler';
import { transitionCreateSchema } from '@/lib/schemas/backtest';
import { findSeriesBySlug } from '@/lib/series/registry';
import { MARK_KINDS } from '@/models/Transition';

export const GET = handle<{ slug: string }>(async (_request, { params }) => {
  await requireRole('viewer');
  const series = await findSeriesBySlug((await params).slug);
  return NextResponse.json({ transitions: await listTransitions(series.id, MARK_KINDS) });
});

/** Marks a known transition or a maintenance break: { at: ISO 8601 or epoch ms, note, kind?: 'transition' | 'maintenance' }. */
export const POST = handle<{ slug: string }>(async (request, { params }) => {
  const actor = await requireRole('lead');
  const series = await findSeriesBySlug((await params).slug);
  const body = await readJson(request, transitionCreateSchema);
  return NextResponse.json(await markTransition(series.id, body, actor), { status: 201 });
});
