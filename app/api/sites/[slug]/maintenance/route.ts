import { NextResponse } from 'next/server';
import { requireRole } from '@/lib/auth/guard';
import { handle } from '@/lib/http/handler';
import { readJson } from '@/lib/http/body';
import { siteMaintenanceSchema } from '@/lib/schemas/backtest';
import { markSiteMaintenance } from '@/lib/marks/write';

/** Marks a maintenance visit on every active series of the site `slug`. */
export const POST = handle<{ slug: string }>(async (request, { params }) => {
  const actor = await requireRole('lead');
  const { slug } = await params;
  const body = await readJson(request, siteMaintenanceSchema);
  return NextResponse.json(await markSiteMaintenance(slug, body, actor), { status: 201 });
});
