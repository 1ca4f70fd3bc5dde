import { NextResponse } from 'next/server';
import { requireRole } from '@/lib/auth/guard';
import { handle } from '@/lib/http/handler';
import { readJson } from '@/lib/http/body';
import { siteRuleCreateSchema } from '@/lib/schemas/rule';
import { findSiteBySlug } from '@/lib/sites/registry';
import { createSiteRule, siteRuleStatuses } from '@/lib/alerts/site-rules';
import { presentRule } from '@/lib/alerts/rules';

/** The site's rules on its site-level indicators, each with its latest judgement and open alert; 404 for an unknown site. */
export const GET = handle<{ slug: string }>(async (_request, { params }) => {
  await requireRole('viewer');
  const site = await findSiteBySlug((await params).slug);
  return NextResponse.json({ items: await siteRuleStatuses(site.id) });
});

/** Adds a rule on the site's site-level indicators (lead+); edited and deleted through /api/rules/{id} as any rule. */
export const POST = handle<{ slug: string }>(async (request, { params }) => {
  const actor = await requireRole('lead');
  const site = await findSiteBySlug((await params).slug);
  const input = await readJson(request, siteRuleCreateSchema);
  return NextResponse.json(presentRule(await createSiteRule(site.id, input, actor)), { status: 201 });
});
