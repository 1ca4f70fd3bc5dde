import { UniqueConstraintError } from 'sequelize';
import { Series, SettingsChange, db, writeTransaction } from '@/models';
import { ConflictError, NotFoundError } from '@/lib/http/errors';
import { recordAudit } from '@/lib/audit';
import type { Actor } from '@/lib/auth/guard';
import { seriesCreateSchema, type SeriesCreateInput } from '@/lib/schemas/series';
import { applyDefaultRules } from '@/lib/alerts/rules';

/** The public shape of a series record (what the API returns). */
export function presentSeries(series: Series) {
  return {
    id: series.id,
    slug: series.slug,
    name: series.name,
    site: series.site,
    unit: series.unit,
    description: series.description,
    intervalMs: series.intervalMs === null ? null : Number(series.intervalMs),
    timeZone: series.timeZone,
    csvMapping: series.csvMapping,
    settings: series.settings,
    duplicatePolicy: series.duplicatePolicy,
    retired: series.retiredAt !== null,
    retiredAt: series.retiredAt,
    createdAt: series.createdAt,
    updatedAt: series.updatedAt,
  };
}
export type SeriesRecord = ReturnType<typeof presentSeries>;

export async function listSeries(options: { includeRetired?: boolean } = {}): Promise<Series[]> {
  await db();
  return Series.findAll({
    where: options.includeRetired ? {} : { retiredAt: null },
    order: [['name', 'ASC']],
  });
}

export async function findSeriesBySlug(slug: string): Promise<Series> {
  await db();
  const series = await Series.findOne({ where: { slug } });
  if (!series) throw new NotFoundError('Series');
  return series;
}

/** Registers a series; defaults fill everything but slug and name. 409 when the slug is taken. */
export async function createSeries(input: SeriesCreateInput, actor: Pick<Actor, 'id'> | null): Promise<Series> {
  const fields = seriesCreateSchema.parse(input);
  try {
    return await writeTransaction(async (transaction) => {
      const series = await Series.create({ ...fields, retiredAt: null, dataChangedAt: null }, { transaction });
      await SettingsChange.create({ seriesId: series.id, settings: fields.settings, changedBy: actor?.id ?? null }, { transaction });
      await applyDefaultRules(series.id, transaction);
      await recordAudit({ actorId: actor?.id ?? null, action: 'series.create', entity: 'series', entityId: series.id, details: { slug: series.slug } }, transaction);
      return series;
    });
  } catch (error) {
    if (error instanceof UniqueConstraintError) throw new ConflictError(`A series with the slug "${fields.slug}" already exists.`);
    throw error;
  }
}
