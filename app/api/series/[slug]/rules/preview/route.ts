import { NextResponse } from 'next/server';
import { requireRole } from '@/lib/auth/guard';
import { handle } from '@/lib/http/handler';
import { readJson } from '@/lib/http/body';
import { rulePreviewSchema } from '@/lib/schemas/rule';
import { findSeriesBySlug } from '@/lib/series/registry';
import { previewDraftRule } from '@/lib/alerts/rule-preview';

/** What a draft rule (not saved) says on the series' latest analysis; nothing is written. */
export const POST = handle<{ slug: string }>(async (request, { params }) => {
  await requireRole('analyst');
  const series = await findSeriesBySlug((await params).slug);
  const { rule, replacing } = await readJson(request, rulePreviewSchema);
  return NextResponse.json(await previewDraftRule(series.id, rule, replacing));
});
