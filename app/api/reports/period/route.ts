import { NextResponse } from 'next/server';
import { requireRole } from '@/lib/auth/guard';
import { handle } from '@/lib/http/handler';
import { csvDownload } from '@/lib/http/csv-download';
import { readQuery } from '@/lib/http/body';
import { periodReportQuerySchema } from '@/lib/schemas/report';
import { buildPeriodReport } from '@/lib/reports/period';
import { periodCsvName, periodReportCsv } from '@/lib/reports/period-shape';

/** The period report of the network or one site: JSON, or one of its tables as CSV (`format=csv&table=alerts`). */
export const GET = handle(async (request) => {
  await requireRole('viewer');
  const query = readQuery(request, periodReportQuerySchema);
  const report = await buildPeriodReport({ from: query.from, to: query.to }, query.site ?? null);
  if (query.format === 'json') return NextResponse.json(report);
  return csvDownload(periodReportCsv(report, query.table), periodCsvName(report, query.table));
});
