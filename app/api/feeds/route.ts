import { NextResponse } from 'next/server';
import { requireRole } from '@/lib/auth/guard';
import { handle } from '@/lib/http/handler';
import { readJson } from '@/lib/http/body';
import { feedCreateSchema } from '@/lib/schemas/feed';
import { createFeed, listFeeds, presentFeed } from '@/lib/feeds/registry';

export const GET = handle(async () => {
  await requireRole('viewer');
  return NextResponse.json({ feeds: (await listFeeds()).map(presentFeed) });
});

/** Registers a station feed: { slug, name, timeColumn, timeFormat?, columns: { column: series }, flagColumns? }. */
export const POST = handle(async (request) => {
  const actor = await requireRole('lead');
  const body = await readJson(request, feedCreateSchema);
  return NextResponse.json(presentFeed(await createFeed(body, actor)), { status: 201 });
});
