import { NextResponse } from 'next/server';
import { requireRole } from '@/lib/auth/guard';
import { handle } from '@/lib/http/handler';
import { readJson, readQuery } from '@/lib/http/body';
import { bulkQuerySchema, bulkRequestSchema } from '@/lib/schemas/series';
import { registerBulk } from '@/lib/series/bulk';

/** Registers a CSV list of series, all or none; `?dryRun=1` answers the per-row check and creates nothing. */
export const POST = handle(async (request) => {
  const actor = await requireRole('lead');
  const { dryRun } = readQuery(request, bulkQuerySchema);
  const { csv } = await readJson(request, bulkRequestSchema);
  const report = await registerBulk(csv, actor, { dryRun: dryRun !== undefined });
  return NextResponse.json(report, { status: dryRun ? 200 : 201 });
});
