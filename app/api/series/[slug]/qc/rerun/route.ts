import { NextResponse } from 'next/server';
import { requireRole } from '@/lib/auth/guard';
import { handle } from '@/lib/http/handler';
import { findSeriesBySlug } from '@/lib/series/registry';
import { rerunQuality } from '@/lib/quality/records';

/** Runs the series' quality-control tests over its whole stored record; answers how many flags changed. */
export const POST = handle<{ slug: string }>(async (_request, { params }) => {
  const actor = await requireRole('lead');
  const series = await findSeriesBySlug((await params).slug);
  return NextResponse.json(await rerunQuality(series, actor));
});
