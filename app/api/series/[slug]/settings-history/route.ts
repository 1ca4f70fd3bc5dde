import { NextResponse } from 'next/server';
import { requireRole } from '@/lib/auth/guard';
import { handle } from '@/lib/http/handler';
import { fetchSettingsHistory } from '@/lib/analysis/settings-history';
import { findSeriesBySlug } from '@/lib/series/registry';

/** GET (viewer+): the series' saved analysis settings, newest first, with who saved them. */
export const GET = handle<{ slug: string }>(async (_request, { params }) => {
  await requireRole('viewer');
  const { slug } = await params;
  const series = await findSeriesBySlug(slug);
  return NextResponse.json({ items: await fetchSettingsHistory(series.id) });
});
