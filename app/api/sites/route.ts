import { NextResponse } from 'next/server';
import { requireRole } from '@/lib/auth/guard';
import { handle } from '@/lib/http/handler';
import { readJson } from '@/lib/http/body';
import { siteCreateSchema } from '@/lib/schemas/site';
import { createSite, listSites } from '@/lib/sites/registry';

export const GET = handle(async () => {
  await requireRole('viewer');
  return NextResponse.json({ items: await listSites() });
});

export const POST = handle(async (request) => {
  const actor = await requireRole('lead');
  const input = await readJson(request, siteCreateSchema);
  return NextResponse.json(await createSite(input, actor), { status: 201 });
});
