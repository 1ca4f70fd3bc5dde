import { NextResponse } from 'next/server';
import { requireRole } from '@/lib/auth/guard';
import { handle } from '@/lib/http/handler';
import { readJson } from '@/lib/http/body';
import { ruleCreateSchema } from '@/lib/schemas/rule';
import { findSeriesBySlug } from '@/lib/series/registry';
import { createRule, listRules, presentRules } from '@/lib/alerts/rules';

export const GET = handle<{ slug: string }>(async (_request, { params }) => {
  await requireRole('viewer');
  const series = await findSeriesBySlug((await params).slug);
  return NextResponse.json({ items: await presentRules(await listRules(series.id)) });
});

export const POST = handle<{ slug: string }>(async (request, { params }) => {
  const actor = await requireRole('lead');
  const series = await findSeriesBySlug((await params).slug);
  const input = await readJson(request, ruleCreateSchema);
  return NextResponse.json((await presentRules([await createRule(series.id, input, actor)]))[0], { status: 201 });
});
