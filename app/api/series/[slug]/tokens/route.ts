import { NextResponse } from 'next/server';
import { requireRole } from '@/lib/auth/guard';
import { handle } from '@/lib/http/handler';
import { readJson } from '@/lib/http/body';
import { findSeriesBySlug } from '@/lib/series/registry';
import { issueIngestToken, listIngestTokens, presentToken } from '@/lib/intake/tokens';
import { tokenIssueSchema } from '@/lib/schemas/intake';

export const GET = handle<{ slug: string }>(async (request, { params }) => {
  await requireRole('admin');
  const { slug } = await params;
  const series = await findSeriesBySlug(slug);
  return NextResponse.json({ items: (await listIngestTokens(series.id)).map(presentToken) });
});

/** Issues a push token; the secret is in this answer only and is never shown again. */
export const POST = handle<{ slug: string }>(async (request, { params }) => {
  const actor = await requireRole('admin');
  const { slug } = await params;
  const series = await findSeriesBySlug(slug);
  const { label } = await readJson(request, tokenIssueSchema);
  return NextResponse.json(await issueIngestToken(series.id, label, actor), { status: 201 });
});
