import { QueryTypes, UniqueConstraintError, type Transaction } from 'sequelize';
import { Series, Site, db, writeTransaction } from '@/models';
import { recordAudit } from '@/lib/audit';
import { cachedRead } from '@/lib/db/read-cache';
import { ConflictError, NotFoundError, UnprocessableError } from '@/lib/http/errors';
import type { Actor } from '@/lib/auth/roles';
import { uniqueSlug } from '@/lib/schemas/series';
import { siteCreateSchema, siteUpdateSchema, type SiteCreateInput, type SiteRecord } from '@/lib/schemas/site';

export function presentSite(site: Site, seriesCount: number): SiteRecord {
  return {
    id: site.id,
    slug: site.slug,
    name: site.name,
    description: site.description,
    latitude: site.latitude === null ? null : Number(site.latitude),
    longitude: site.longitude === null ? null : Number(site.longitude),
    timeZone: site.timeZone,
    notes: site.notes,
    seriesCount,
  };
}

/** How many active series each site holds, by site id. One grouped query. */
async function activeSeriesCounts(): Promise<Map<number, number>> {
  const sequelize = await db();
  const rows = await sequelize.query<{ site_id: number; n: number }>(
    'SELECT site_id, COUNT(*) AS n FROM series WHERE site_id IS NOT NULL AND retired_at IS NULL GROUP BY site_id',
    { type: QueryTypes.SELECT },
  );
  return new Map(rows.map((row) => [row.site_id, Number(row.n)]));
}

/** Every site by name, with its number of active series; answered from the read cache until the next commit. */
export async function listSites(): Promise<SiteRecord[]> {
  return cachedRead('sites', async () => {
    await db();
    const [sites, counts] = await Promise.all([Site.findAll({ order: [['name', 'ASC']] }), activeSeriesCounts()]);
    return sites.map((site) => presentSite(site, counts.get(site.id) ?? 0));
  });
}

export async function findSiteBySlug(slug: string, transaction?: Transaction): Promise<Site> {
  await db();
  const site = await Site.findOne({ where: { slug }, transaction });
  if (!site) throw new NotFoundError('Site');
  return site;
}

function conflict(error: unknown, input: { slug?: string; name?: string }): never {
  if (error instanceof UniqueConstraintError) {
    const onName = error.errors.some((e) => e.path === 'name');
    throw new ConflictError(onName ? `A site named "${input.name}" already exists.` : `A site with the slug "${input.slug}" already exists.`);
  }
  throw error;
}

export async function createSite(input: SiteCreateInput, actor: Pick<Actor, 'id'>): Promise<SiteRecord> {
  const fields = siteCreateSchema.parse(input);
  try {
    return await writeTransaction(async (transaction) => {
      const site = await Site.create(fields, { transaction });
      await recordAudit({ actorId: actor.id, action: 'site.create', entity: 'site', entityId: site.id, details: { slug: site.slug } }, transaction);
      return presentSite(site, 0);
    });
  } catch (error) {
    conflict(error, fields);
  }
}

/**
 * Applies a PATCH; a new name is written into `series.site` of its series in the same transaction (see
 * models/Site.ts). Audited with the names of the fields it changed.
 */
export async function updateSite(slug: string, input: unknown, actor: Pick<Actor, 'id'>): Promise<SiteRecord> {
  const patch = siteUpdateSchema.parse(input);
  try {
    return await writeTransaction(async (transaction) => {
      const site = await findSiteBySlug(slug, transaction);
      const changed = Object.keys(patch).filter((key) => patch[key as keyof typeof patch] !== site.get(key));
      site.set(patch);
      await site.save({ transaction });
      if (changed.includes('name')) await Series.update({ site: site.name }, { where: { siteId: site.id }, transaction });
      if (changed.length)
        await recordAudit({ actorId: actor.id, action: 'site.update', entity: 'site', entityId: site.id, details: { fields: changed } }, transaction);
      return presentSite(site, await Series.count({ where: { siteId: site.id, retiredAt: null }, transaction }));
    });
  } catch (error) {
    conflict(error, patch);
  }
}

/** The site columns of a series: its id and its name beside it (see models/Site.ts). */
export interface SeriesSiteFields {
  siteId: number | null;
  site: string;
}

/**
 * Which site a series gets, inside the caller's transaction. `siteId` names an existing site (422 when there is
 * none); otherwise a non-empty `site` name picks the site of that name, creating it (audited, in the series' time
 * zone) when there is none, so clients that send only a name keep working; '' means no site.
 */
export async function resolveSeriesSite(
  input: { siteId?: number | null; site?: string; timeZone?: string },
  actor: Pick<Actor, 'id'> | null,
  transaction: Transaction,
): Promise<SeriesSiteFields> {
  if (input.siteId !== undefined && input.siteId !== null) {
    const site = await Site.findByPk(input.siteId, { transaction });
    if (!site) throw new UnprocessableError('Some fields are not valid.', { siteId: ['No such site.'] });
    return { siteId: site.id, site: site.name };
  }
  const name = input.siteId === null ? '' : (input.site ?? '').trim();
  if (!name) return { siteId: null, site: '' };
  const existing = await Site.findOne({ where: { name }, transaction });
  if (existing) return { siteId: existing.id, site: existing.name };
  const taken = new Set((await Site.findAll({ attributes: ['slug'], transaction })).map((site) => site.slug));
  const site = await Site.create({ slug: uniqueSlug(name, taken), name, latitude: null, longitude: null, timeZone: input.timeZone ?? 'UTC' }, { transaction });
  await recordAudit(
    { actorId: actor?.id ?? null, action: 'site.create', entity: 'site', entityId: site.id, details: { slug: site.slug, from: 'series' } },
    transaction,
  );
  return { siteId: site.id, site: site.name };
}
