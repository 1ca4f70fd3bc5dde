import { NextResponse } from 'next/server';
import { requireRole } from '@/lib/auth/guard';
import { handle } from '@/lib/http/handler';
import { readJson } from '@/lib/http/body';
import { siteMaintenanceSchema } from '@/lib/schemas/backtest';
import { markSiteMaintenance } from '@/lib/marks/write';

/** Marks a maintenance visit on every active series of a site (the site as the series carry it, URL-encoded). */
export const POST = handle<{ site: string }>(async (request, { params }) => {
  const actor = await requireRole('lead');
  const site = decodeURIComponent((await params).site);
  const body = await readJson(request, siteMaintenanceSchema);
  return NextResponse.json(await markSiteMaintenance(site, body, actor), { status: 201 });
});
