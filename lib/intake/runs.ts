import 'server-only';
import { IngestRun, Series, db } from '@/models';
import { NotFoundError } from '@/lib/http/errors';
import type { IngestRunQuery } from '@/lib/schemas/intake';
import type { IngestRunRecord } from './run-record';

/** The public shape of a run (its report apart). */
export function presentRun(run: IngestRun & { series?: Series | null }): IngestRunRecord {
  return {
    id: run.id,
    series: run.series ? { slug: run.series.slug, name: run.series.name, timeZone: run.series.timeZone } : null,
    source: run.source,
    fileName: run.fileName,
    contentHash: run.contentHash,
    status: run.status,
    rowsRead: run.rowsRead,
    accepted: run.accepted,
    duplicates: run.duplicates,
    replaced: run.replaced,
    rejected: run.rejected,
    message: run.message,
    alreadyApplied: run.report?.alreadyApplied === true,
    durationMs: run.durationMs,
    userId: run.userId,
    tokenId: run.tokenId,
    startedAt: run.startedAt.toISOString(),
    finishedAt: run.finishedAt?.toISOString() ?? null,
  };
}

/** Newest runs first, filtered by series slug and status. */
export async function listIngestRuns(query: IngestRunQuery) {
  await db();
  const where: Record<string, unknown> = {};
  if (query.status) where.status = query.status;
  if (query.series) {
    const series = await Series.findOne({ where: { slug: query.series } });
    if (!series) return { items: [], total: 0, page: query.page, pageSize: query.pageSize };
    where.seriesId = series.id;
  }
  const { rows, count } = await IngestRun.findAndCountAll({
    where,
    include: [{ model: Series, as: 'series', attributes: ['slug', 'name', 'timeZone'] }],
    attributes: { exclude: ['report'] },
    order: [['id', 'DESC']],
    limit: query.pageSize,
    offset: (query.page - 1) * query.pageSize,
  });
  return { items: rows.map(presentRun), total: count, page: query.page, pageSize: query.pageSize };
}

/** One run with its report (rejected rows with line, column and reason; notes; detected layout). */
export async function fetchIngestRun(id: number) {
  await db();
  const run = await IngestRun.findByPk(id, { include: [{ model: Series, as: 'series', attributes: ['slug', 'name', 'timeZone'] }] });
  if (!run) throw new NotFoundError('Ingest run');
  const { runKey: _key, holder: _holder, ...report } = run.report ?? {};
  return { ...presentRun(run), report };
}
