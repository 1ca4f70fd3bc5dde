import { NextResponse } from 'next/server';
import { presentRules } from '@/lib/alerts/rules';
import { requireRole } from '@/lib/auth/guard';
import { queueRuleCalibration, saveRuleThreshold } from '@/lib/backtest/jobs';
import { readJson } from '@/lib/http/body';
import { handle } from '@/lib/http/handler';
import { idParam } from '@/lib/http/params';
import { thresholdSchema } from '@/lib/schemas/backtest';

/** Saves the tau threshold chosen from a calibration's ROC into the rule (audited with the ROC point). */
export const POST = handle<{ id: string }>(async (request, { params }) => {
  const actor = await requireRole('lead');
  const id = idParam((await params).id, 'Rule');
  const body = await readJson(request, thresholdSchema);
  const rule = await saveRuleThreshold(id, body, actor);
  // A new threshold is another procedure: its false-alarm rate is calibrated again.
  if (rule.active && rule.seriesId !== null) await queueRuleCalibration(rule.id, actor);
  return NextResponse.json((await presentRules([rule]))[0]);
});
