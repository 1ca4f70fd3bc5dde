import { NextResponse } from 'next/server';
import { requireRole } from '@/lib/auth/guard';
import { handle } from '@/lib/http/handler';
import { readJson } from '@/lib/http/body';
import { ruleCreateSchema } from '@/lib/schemas/rule';
import { createRule, listRules, presentRules } from '@/lib/alerts/rules';

/** Default rules: copied onto every series created afterwards (edit or delete them with /api/rules/{id}). */
export const GET = handle(async () => {
  await requireRole('viewer');
  return NextResponse.json({ items: await presentRules(await listRules(null)) });
});

export const POST = handle(async (request) => {
  const actor = await requireRole('lead');
  const input = await readJson(request, ruleCreateSchema);
  return NextResponse.json((await presentRules([await createRule(null, input, actor)]))[0], { status: 201 });
});
