import { NextResponse } from 'next/server';
import { requireRole } from '@/lib/auth/guard';
import { handle } from '@/lib/http/handler';
import { fetchSiteAnalysis } from '@/lib/sites/analysis';

/** The site's latest site-level snapshot (indicators across its series, computed by the scheduler); 404 for an unknown site. */
export const GET = handle<{ slug: string }>(async (request, { params }) => {
  await requireRole('viewer');
  const { slug } = await params;
  return NextResponse.json(await fetchSiteAnalysis(slug));
});
