import { NextResponse } from 'next/server';
import { requireRole } from '@/lib/auth/guard';
import { handle } from '@/lib/http/handler';
import { readJson } from '@/lib/http/body';
import { flagOverrideSchema } from '@/lib/schemas/quality';
import { findSeriesBySlug } from '@/lib/series/registry';
import { overrideFlags } from '@/lib/quality/records';

/** An analyst's override of the flags in a time range: { from, to, flag: 1 | 3 | 4, reason } (audited). */
export const POST = handle<{ slug: string }>(async (request, { params }) => {
  const actor = await requireRole('analyst');
  const series = await findSeriesBySlug((await params).slug);
  const body = await readJson(request, flagOverrideSchema);
  return NextResponse.json(await overrideFlags(series, body, actor));
});
