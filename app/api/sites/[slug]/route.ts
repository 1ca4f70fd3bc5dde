import { NextResponse } from 'next/server';
import { requireRole } from '@/lib/auth/guard';
import { handle } from '@/lib/http/handler';
import { readJson } from '@/lib/http/body';
import { siteUpdateSchema } from '@/lib/schemas/site';
import { fetchSitePage } from '@/lib/sites/page-data';
import { updateSite } from '@/lib/sites/registry';

/** The site with its series (state, latest data, open alerts) and its open alerts. */
export const GET = handle<{ slug: string }>(async (request, { params }) => {
  const actor = await requireRole('viewer');
  const { slug } = await params;
  return NextResponse.json(await fetchSitePage(slug, actor.id));
});

export const PATCH = handle<{ slug: string }>(async (request, { params }) => {
  const actor = await requireRole('lead');
  const { slug } = await params;
  const patch = await readJson(request, siteUpdateSchema);
  return NextResponse.json(await updateSite(slug, patch, actor));
});
