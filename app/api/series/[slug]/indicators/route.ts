import { NextResponse } from 'next/server';
import { requireRole } from '@/lib/auth/guard';
import { handle } from '@/lib/http/handler';
import { csvDownload } from '@/lib/http/csv-download';
import { readJson, readQuery } from '@/lib/http/body';
import { findSeriesBySlug } from '@/lib/series/registry';
import { buildIndicatorTable, indicatorTableCsv, type IndicatorTable } from '@/lib/reports/indicator-export';
import { analysisRequestSchema, indicatorExportQuerySchema } from '@/lib/schemas/analysis';

function respond(table: IndicatorTable, format: 'csv' | 'json'): Response {
  const name = `${table.series.slug}-indicators.${format}`;
  if (format === 'json') return NextResponse.json(table, { headers: { 'content-disposition': `attachment; filename="${name}"` } });
  return csvDownload(indicatorTableCsv(table), name);
}

/** GET (viewer+): the indicator table of the latest snapshot, `?format=csv|json`. */
export const GET = handle<{ slug: string }>(async (request, { params }) => {
  await requireRole('viewer');
  const { slug } = await params;
  const { format } = readQuery(request, indicatorExportQuerySchema);
  const series = await findSeriesBySlug(slug);
  return respond(await buildIndicatorTable(series), format);
});

/** POST (analyst+, like the preview it mirrors): the indicator table for posted what-if settings `{ settings }`, `?format=csv|json`. */
export const POST = handle<{ slug: string }>(async (request, { params }) => {
  await requireRole('analyst');
  const { slug } = await params;
  const { format } = readQuery(request, indicatorExportQuerySchema);
  const series = await findSeriesBySlug(slug);
  const { settings } = await readJson(request, analysisRequestSchema);
  return respond(await buildIndicatorTable(series, settings), format);
});
