import { NextResponse } from 'next/server';
import { requireRole } from '@/lib/auth/guard';
import { handle } from '@/lib/http/handler';
import { readJson } from '@/lib/http/body';
import { idParam } from '@/lib/http/params';
import { ruleChangesBodySchema } from '@/lib/schemas/rule';
import { deleteRule, presentRules, updateRule } from '@/lib/alerts/rules';

export const PATCH = handle<{ id: string }>(async (request, { params }) => {
  const actor = await requireRole('lead');
  const id = idParam((await params).id, 'Rule');
  // Validated by the rule's kind in updateRule: a site rule takes the site-level indicators.
  const changes = await readJson(request, ruleChangesBodySchema);
  return NextResponse.json((await presentRules([await updateRule(id, changes, actor)]))[0]);
});

/** Deletes a rule; one that already raised alerts is deactivated instead and the answer says so. */
export const DELETE = handle<{ id: string }>(async (_request, { params }) => {
  const actor = await requireRole('lead');
  const id = idParam((await params).id, 'Rule');
  return NextResponse.json(await deleteRule(id, actor));
});
