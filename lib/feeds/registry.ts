import { UniqueConstraintError } from 'sequelize';
import { Feed, Series, db, writeTransaction } from '@/models';
import { recordAudit } from '@/lib/audit';
import { ConflictError, NotFoundError, UnprocessableError } from '@/lib/http/errors';
import { feedCreateSchema, type FeedCreateInput } from '@/lib/schemas/feed';

/** The public shape of a feed (what the API returns). */
export function presentFeed(feed: Feed) {
  return {
    id: feed.id,
    slug: feed.slug,
    name: feed.name,
    timeColumn: feed.timeColumn,
    timeFormat: feed.timeFormat,
    columns: feed.columns,
    flagColumns: feed.flagColumns,
    maintenanceColumn: feed.maintenanceColumn ?? null,
    /** where station files for this feed are dropped, relative to DROP_DIR */
    dropFolder: `feeds/${feed.slug}`,
    createdAt: feed.createdAt,
    updatedAt: feed.updatedAt,
  };
}
export type FeedRecord = ReturnType<typeof presentFeed>;

export async function listFeeds(): Promise<Feed[]> {
  await db();
  return Feed.findAll({ order: [['slug', 'ASC']] });
}

export async function findFeedBySlug(slug: string): Promise<Feed> {
  await db();
  const feed = await Feed.findOne({ where: { slug } });
  if (!feed) throw new NotFoundError('Feed');
  return feed;
}

/**
 * Registers a feed. Every series it names must exist and be active (a 422 lists those that are not), and the slug
 * must be free (409). Audited.
 */
export async function createFeed(input: FeedCreateInput, actor: { id: number } | null): Promise<Feed> {
  const fields = feedCreateSchema.parse(input);
  await db();
  const slugs = Object.values(fields.columns);
  const found = new Map((await Series.findAll({ where: { slug: slugs } })).map((s) => [s.slug, s]));
  const problems: Record<string, string[]> = {};
  for (const [column, slug] of Object.entries(fields.columns)) {
    const series = found.get(slug);
    if (!series) problems[`columns.${column}`] = [`No series "${slug}" is registered; create it first.`];
    else if (series.retiredAt) problems[`columns.${column}`] = [`The series "${slug}" is retired.`];
  }
  if (Object.keys(problems).length) throw new UnprocessableError('Some fields are not valid.', problems);
  try {
    return await writeTransaction(async (transaction) => {
      const feed = await Feed.create({ ...fields, createdBy: actor?.id ?? null }, { transaction });
      await recordAudit(
        { actorId: actor?.id ?? null, action: 'feed.create', entity: 'feed', entityId: feed.id, details: { slug: feed.slug, series: slugs } },
        transaction,
      );
      return feed;
    });
  } catch (error) {
    if (error instanceof UniqueConstraintError) throw new ConflictError(`A feed with the slug "${fields.slug}" already exists.`);
    throw error;
  }
}
