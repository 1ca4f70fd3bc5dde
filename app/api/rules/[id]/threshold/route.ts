import { NextResponse } from 'next/server';
import { presentRules } from '@/lib/alerts/rules';
import { requireRole } from '@/lib/auth/guard';
import { saveRuleThreshold } from '@/lib/backtest/jobs';
import { readJson } from '@/lib/http/body';
import { handle } from '@/lib/http/handler';
import { idParam } from '@/lib/http/params';
import { thresholdSchema } from '@/lib/schemas/backtest';

/** Saves the tau threshold chosen from a calibration's ROC into the rule (audited with the ROC point). */
export const POST = handle<{ id: string }>(async (request, { params }) => {
  const actor = await requireRole('lead');
  const id = idParam((await params).id, 'Rule');
  const body = await readJson(request, thresholdSchema);
  return NextResponse.json((await presentRules([await saveRuleThreshold(id, body, actor)]))[0]);
});
