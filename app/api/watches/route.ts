import { NextResponse } from 'next/server';
import { requireRole } from '@/lib/auth/guard';
import { handle } from '@/lib/http/handler';
import { listWatches } from '@/lib/mail/watches';

export const GET = handle(async () => {
  const actor = await requireRole('viewer');
  return NextResponse.json({ items: await listWatches(actor) });
});
