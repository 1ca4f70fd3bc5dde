import { NextResponse } from 'next/server';
import { requireRole } from '@/lib/auth/guard';
import { handle } from '@/lib/http/handler';
import { readJson } from '@/lib/http/body';
import { watchSchema } from '@/lib/schemas/alert';
import { findSeriesBySlug } from '@/lib/series/registry';
import { setWatch } from '@/lib/mail/watches';

/** The signed-in user's mail preference for this series: immediate, digest or none. */
export const PUT = handle<{ slug: string }>(async (request, { params }) => {
  const actor = await requireRole('viewer');
  const series = await findSeriesBySlug((await params).slug);
  const { mode } = await readJson(request, watchSchema);
  const watch = await setWatch(actor, series, mode);
  return NextResponse.json({ series: series.slug, mode: watch.mode });
});
