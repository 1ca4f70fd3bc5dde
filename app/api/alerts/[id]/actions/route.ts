import { NextResponse } from 'next/server';
import { requireRole } from '@/lib/auth/guard';
import { handle } from '@/lib/http/handler';
import { readJson } from '@/lib/http/body';
import { idParam } from '@/lib/http/params';
import { triageActionSchema } from '@/lib/schemas/alert';
import { applyTriageAction } from '@/lib/alerts/triage';

/** Every triage action needs at least the analyst role; lead-only actions are refused by the triage policy (403). */
export const POST = handle<{ id: string }>(async (request, { params }) => {
  const actor = await requireRole('analyst');
  const id = idParam((await params).id, 'Alert');
  const input = await readJson(request, triageActionSchema);
  return NextResponse.json(await applyTriageAction(id, input, actor));
});
