import { NextResponse } from 'next/server';
import { requireRole } from '@/lib/auth/guard';
import { handle } from '@/lib/http/handler';
import { readJson } from '@/lib/http/body';
import { watchersUpdateSchema } from '@/lib/schemas/alert';
import { findSeriesBySlug } from '@/lib/series/registry';
import { seriesWatchers, setSeriesWatchers } from '@/lib/mail/watches';

/** Who hears of this series' alerts: every active user with their mode (immediate, daily digest or none). */
export const GET = handle<{ slug: string }>(async (_request, { params }) => {
  await requireRole('lead');
  const series = await findSeriesBySlug((await params).slug);
  return NextResponse.json({ items: await seriesWatchers(series.id) });
});

/** A lead sets how the listed users hear of this series' alerts; each change is audited. */
export const PUT = handle<{ slug: string }>(async (request, { params }) => {
  const actor = await requireRole('lead');
  const series = await findSeriesBySlug((await params).slug);
  const { watchers } = await readJson(request, watchersUpdateSchema);
  await setSeriesWatchers(actor, series, watchers);
  return NextResponse.json({ items: await seriesWatchers(series.id) });
});
