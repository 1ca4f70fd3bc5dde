import { Op, QueryTypes, UniqueConstraintError, col, fn, where, type Transaction, type WhereOptions } from 'sequelize';
import { AlertRule, AnalysisSnapshot, Series, SettingsChange, WITHOUT_CHARTS, db, writeTransaction } from '@/models';
import { observationExtent } from '@/lib/analysis/observations';
import { ConflictError, NotFoundError } from '@/lib/http/errors';
import { recordAudit } from '@/lib/audit';
import { cachedRead } from '@/lib/db/read-cache';
import { isPostgres } from '@/lib/db/dialect';
import type { Actor } from '@/lib/auth/roles';
import { seriesCreateSchema, seriesUpdateSchema, type SeriesCreate, type SeriesCreateInput } from '@/lib/schemas/series';
import { resolveSeriesSite } from '@/lib/sites/registry';

/** The public shape of a series record (what the API returns). */
export function presentSeries(series: Series) {
  return {
    id: series.id,
    slug: series.slug,
    name: series.name,
    site: series.site,
    siteId: series.siteId ?? null,
    unit: series.unit,
    description: series.description,
    intervalMs: series.intervalMs === null ? null : Number(series.intervalMs),
    timeZone: series.timeZone,
    lateAfterMs: series.lateAfterMs ?? null,
    csvMapping: series.csvMapping,
    settings: series.settings,
    duplicatePolicy: series.duplicatePolicy,
    qc: series.qc ?? null,
    retired: series.retiredAt !== null,
    retiredAt: series.retiredAt,
    createdAt: series.createdAt,
    updatedAt: series.updatedAt,
  };
}
export type SeriesRecord = ReturnType<typeof presentSeries>;

/**
 * Series by name. `find` keeps those whose name, slug or site contains it; SQLite's lower() folds ASCII letters
 * only, so other scripts match as typed (PostgreSQL's folds every script). `instr` rather than LIKE, so `%` and `_` in a search are plain characters.
 */
export async function listSeries(options: { includeRetired?: boolean; find?: string; limit?: number } = {}): Promise<Series[]> {
  const sequelize = await db();
  const conditions: WhereOptions[] = options.includeRetired ? [] : [{ retiredAt: null }];
  const needle = options.find?.toLowerCase();
  // PostgreSQL's name for instr (position of a substring, 0 when absent) is strpos.
  const position = isPostgres(sequelize) ? 'strpos' : 'instr';
  if (needle) conditions.push({ [Op.or]: ['name', 'slug', 'site'].map((column) => where(fn(position, fn('lower', col(column)), needle), Op.gt, 0)) });
  return Series.findAll({ where: { [Op.and]: conditions }, order: [['name', 'ASC']], limit: options.limit });
}

export interface SeriesChoice {
  slug: string;
  name: string;
}

/** Slug and name of every active series, by name, for pickers; a raw read, since the full models are not needed. */
export async function listSeriesChoices(): Promise<SeriesChoice[]> {
  return cachedRead('series-choices', async () => {
    const sequelize = await db();
    return sequelize.query<SeriesChoice>('SELECT slug, name FROM series WHERE retired_at IS NULL ORDER BY name ASC', { type: QueryTypes.SELECT });
  });
}

/** Whether any series is active: screens that pick a series as one types only need to know there is one. */
export async function hasActiveSeries(): Promise<boolean> {
  return cachedRead('series-any', async () => {
    const sequelize = await db();
    const [row] = await sequelize.query<{ found: number }>('SELECT EXISTS (SELECT 1 FROM series WHERE retired_at IS NULL) AS found', {
      type: QueryTypes.SELECT,
    });
    return Boolean(row?.found);
  });
}

/** The picker entry of one active series, or null (an address naming an unknown or retired series). */
export async function findSeriesChoice(slug: string): Promise<SeriesChoice | null> {
  return (await listSeriesChoices()).find((choice) => choice.slug === slug) ?? null;
}

export async function findSeriesBySlug(slug: string): Promise<Series> {
  await db();
  const series = await Series.findOne({ where: { slug } });
  if (!series) throw new NotFoundError('Series');
  return series;
}

/** Copies the default rules (series null) onto a freshly created series, inside its creation transaction. */
async function applyDefaultRules(seriesId: number, transaction: Transaction): Promise<number> {
  const defaults = await AlertRule.findAll({ where: { seriesId: null, siteId: null, active: true }, transaction });
  for (const rule of defaults) {
    const { id: _id, createdAt: _c, updatedAt: _u, seriesId: _s, ...fields } = rule.get({ plain: true });
    await AlertRule.create({ ...fields, seriesId }, { transaction });
  }
  return defaults.length;
}

/**
 * Writes one validated series inside the caller's transaction: the record with its site, the first entry of its
 * settings history, the default rules and the audit entry. Shared by single and bulk registration.
 */
export async function insertSeries(fields: SeriesCreate, actor: Pick<Actor, 'id'> | null, transaction: Transaction): Promise<Series> {
  const { siteId: _siteId, site: _site, ...rest } = fields;
  const site = await resolveSeriesSite(fields, actor, transaction);
  const series = await Series.create({ ...rest, ...site, retiredAt: null, dataChangedAt: null }, { transaction });
  await SettingsChange.create({ seriesId: series.id, settings: fields.settings, changedBy: actor?.id ?? null }, { transaction });
  await applyDefaultRules(series.id, transaction);
  await recordAudit(
    { actorId: actor?.id ?? null, action: 'series.create', entity: 'series', entityId: series.id, details: { slug: series.slug } },
    transaction,
  );
  return series;
}

/** Registers a series; defaults fill everything but slug and name. 409 when the slug is taken. */
export async function createSeries(input: SeriesCreateInput, actor: Pick<Actor, 'id'> | null): Promise<Series> {
  const fields = seriesCreateSchema.parse(input);
  try {
    return await writeTransaction((transaction) => insertSeries(fields, actor, transaction));
  } catch (error) {
    if (error instanceof UniqueConstraintError) throw new ConflictError(`A series with the slug "${fields.slug}" already exists.`);
    throw error;
  }
}

/** A series with the extent of its record and the summary of its newest analysis snapshot. */
export async function fetchSeriesDetail(slug: string) {
  return cachedRead(`series-detail:${slug}`, () => loadSeriesDetail(slug));
}

async function loadSeriesDetail(slug: string) {
  const series = await findSeriesBySlug(slug);
  const [extent, latest] = await Promise.all([
    observationExtent(series.id),
    // This answer carries the summary only, so the large chart columns stay unread.
    AnalysisSnapshot.findOne({ where: { seriesId: series.id }, order: [['id', 'DESC']], attributes: WITHOUT_CHARTS }),
  ]);
  return {
    ...presentSeries(series),
    needsAnalysis: series.needsAnalysis,
    dataChangedAt: series.dataChangedAt,
    observations: { count: extent.count, first: extent.first, last: extent.last },
    latestAnalysis: latest && {
      id: latest.id,
      createdAt: latest.createdAt,
      status: latest.status,
      error: latest.error,
      n: latest.n,
      dataFrom: latest.dataFrom === null ? null : Number(latest.dataFrom),
      dataTo: latest.dataTo === null ? null : Number(latest.dataTo),
      /** the data version the analysis read (null when stored before versions were counted) */
      dataVersion: latest.provenance?.dataVersion ?? null,
      summary: latest.summary,
    },
  };
}

/**
 * Applies a PATCH. Changed analysis settings are kept in the settings history and mark the series for a fresh
 * analysis; `retired` retires or restores. Every change is audited with the names of the fields it touched.
 */
export async function updateSeries(slug: string, input: unknown, actor: Pick<Actor, 'id'>): Promise<Series> {
  const patch = seriesUpdateSchema.parse(input);
  await db();
  return writeTransaction(async (transaction) => {
    const series = await Series.findOne({ where: { slug }, transaction });
    if (!series) throw new NotFoundError('Series');
    const { retired, siteId, site, reason = null, ...rest } = patch;
    const timeZone = rest.timeZone ?? series.timeZone;
    const fields =
      siteId !== undefined || site !== undefined ? { ...rest, ...(await resolveSeriesSite({ siteId, site, timeZone }, actor, transaction)) } : rest;
    const changed = Object.keys(fields).filter((key) => JSON.stringify(fields[key as keyof typeof fields]) !== JSON.stringify(series.get(key)));
    const settingsChanged = changed.includes('settings');
    const before = { qc: series.qc };
    series.set(fields);
    // Which flags enter the analysis is part of the QC settings.
    if (settingsChanged || changed.includes('qc')) series.needsAnalysis = true;
    const retiring = retired !== undefined && retired !== (series.retiredAt !== null);
    if (retiring) series.retiredAt = retired ? new Date() : null;
    await series.save({ transaction });
    if (settingsChanged) await SettingsChange.create({ seriesId: series.id, settings: series.settings, changedBy: actor.id, reason }, { transaction });
    if (changed.length) {
      // A QC change keeps its limits before and after: the period report lists it with the other threshold changes.
      const qc = changed.includes('qc') ? { qcBefore: before.qc, qcAfter: series.qc } : {};
      await recordAudit(
        { actorId: actor.id, action: 'series.update', entity: 'series', entityId: series.id, details: { fields: changed, reason, ...qc } },
        transaction,
      );
    }
    if (retiring) {
      await recordAudit(
        { actorId: actor.id, action: retired ? 'series.retire' : 'series.restore', entity: 'series', entityId: series.id, details: {} },
        transaction,
      );
    }
    return series;
  });
}
