import { NextResponse } from 'next/server';
import { requireRole } from '@/lib/auth/guard';
import { handle } from '@/lib/http/handler';
import { listDropFolders } from '@/lib/intake/drop-folders';

/** Drop folders as they are now: waiting files, rejected files with their reports, folders matching no series. */
export const GET = handle(async () => {
  await requireRole('viewer');
  return NextResponse.json({ items: await listDropFolders() });
});
