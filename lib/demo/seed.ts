import { AlertRule, Observation, Series, Mark, Site, User, Watch, db, writeTransaction, type Role } from '@/models';
import { hashPassword } from '@/lib/auth/password';
import { readAppState, writeAppState } from '@/lib/db/app-state';
import { recordAudit } from '@/lib/audit';
import { createSeries } from '@/lib/series/registry';
import { suggestSlug } from '@/lib/schemas/series';
import { createSiteRule } from '@/lib/alerts/site-rules';
import { DEMO_SITE_PLACES, DEMO_SITE_RULES, buildDemoScenario, type DemoSeries } from './scenario';

/** The four demo accounts, one per role; all share the password given at start (DEMO_PASSWORD). */
export const DEMO_USERS: readonly { email: string; name: string; role: Role }[] = [
  { email: 'admin@brinkwatch.test', name: 'Ada Quennell', role: 'admin' },
  { email: 'lead@brinkwatch.test', name: 'Lorcan Threlfall', role: 'lead' },
  { email: 'analyst@brinkwatch.test', name: 'Anwen Marchbank', role: 'analyst' },
  { email: 'viewer@brinkwatch.test', name: 'Vida Pellow', role: 'viewer' },
];

/** Demo users who watch every demo series and get its alerts by immediate mail. */
const WATCHERS = ['analyst@brinkwatch.test', 'lead@brinkwatch.test'];

/**
 * Rows per INSERT: 3 bound values each keeps a statement at 900 variables, under SQLite's historical
 * SQLITE_MAX_VARIABLE_NUMBER of 999 (https://www.sqlite.org/limits.html, item 9).
 */
const OBSERVATIONS_PER_INSERT = 300;

/** app_state keys of the seed guard: `seed.started` holds {startedAt, demo}; `seed.completed` the finish instant. */
const SEED_STARTED = 'seed.started';
const SEED_COMPLETED = 'seed.completed';

/** Creates the demo accounts that do not exist yet (matched by e-mail). Returns all four. */
async function seedDemoUsers(password: string): Promise<User[]> {
  await db();
  const users: User[] = [];
  for (const account of DEMO_USERS) {
    const existing = await User.findOne({ where: { email: account.email } });
    users.push(existing ?? (await User.create({ ...account, passwordHash: await hashPassword(password), active: true })));
  }
  return users;
}

/**
 * Everything of one demo series after its registry entry, in one transaction: observations (missing samples
 * are simply absent), alert rules, marked tipping points, watches, and the flag that asks the scheduler's
 * analysis job for a first snapshot. Returns the number of observations stored.
 */
async function fillSeries(series: Series, demo: DemoSeries, actorId: number | null, watcherIds: number[]): Promise<number> {
  return writeTransaction(async (transaction) => {
    const rows: { seriesId: number; t: number; value: number }[] = [];
    for (let i = 0; i < demo.values.length; i++) {
      if (!Number.isNaN(demo.values[i])) rows.push({ seriesId: series.id, t: demo.times[i], value: demo.values[i] });
    }
    for (let from = 0; from < rows.length; from += OBSERVATIONS_PER_INSERT) {
      await Observation.bulkCreate(rows.slice(from, from + OBSERVATIONS_PER_INSERT), { transaction, validate: false, hooks: false });
    }
    await AlertRule.bulkCreate(
      demo.rules.map((rule) => ({ ...rule, seriesId: series.id, active: true, createdBy: actorId })),
      { transaction },
    );
    await Mark.bulkCreate(
      demo.marks.map(({ at, note, kind }) => ({ seriesId: series.id, at, note, kind, createdBy: actorId })),
      { transaction },
    );
    await Watch.bulkCreate(
      watcherIds.map((userId) => ({ userId, seriesId: series.id, mode: 'immediate' as const })),
      { transaction },
    );
    await Series.update({ needsAnalysis: true, dataChangedAt: new Date() }, { where: { id: series.id }, transaction });
    return rows.length;
  });
}

/**
 * Seeds the demo network (lib/demo/scenario.ts) with records ending just before now (demoRecordEnd): the sites and
 * their site rules, each series through `createSeries`, then its observations, rules, marks and watches in one transaction per series.
 * Resumable: a series whose registry entry exists but holds no observations (a crash between the two
 * transactions) is filled now; a filled one is left alone. Returns what this call added.
 */
export async function seedDemoScenario(actorId: number | null): Promise<{ series: number; observations: number }> {
  await db();
  const watchers = await User.findAll({ where: { email: WATCHERS }, attributes: ['id'] });
  const watcherIds = watchers.map((user) => user.id);
  let seriesAdded = 0;
  let observations = 0;
  // The sites first, with their places, so the series find them by name instead of creating bare ones.
  for (const place of DEMO_SITE_PLACES) {
    if (await Site.findOne({ where: { name: place.name } })) continue;
    await Site.create({ slug: suggestSlug(place.name), ...place });
  }
  for (const { site: name, rule } of DEMO_SITE_RULES) {
    const site = await Site.findOne({ where: { name }, attributes: ['id'] });
    if (site && !(await AlertRule.count({ where: { siteId: site.id } }))) await createSiteRule(site.id, rule, actorId === null ? null : { id: actorId });
  }
  for (const demo of buildDemoScenario(new Date())) {
    let series = await Series.findOne({ where: { slug: demo.input.slug } });
    if (!series) {
      series = await createSeries(demo.input, actorId === null ? null : { id: actorId });
      seriesAdded++;
    } else if ((await Observation.count({ where: { seriesId: series.id } })) > 0) {
      continue;
    }
    observations += await fillSeries(series, demo, actorId, watcherIds);
  }
  await recordAudit({ actorId, action: 'demo.seed', entity: 'series', details: { series: seriesAdded, observations } });
  return { series: seriesAdded, observations };
}

/** Whether this installation's seed, finished, included the demo network (what the demo feed continues). */
export async function demoSeeded(): Promise<boolean> {
  if (!(await readAppState(SEED_COMPLETED))) return false;
  const started = await readAppState(SEED_STARTED);
  return started !== null && (JSON.parse(started.value) as { demo?: boolean }).demo === true;
}

/**
 * Seeds a fresh installation once: the four demo users and, when `demo` is set, the demo network.
 * Does nothing when the users table already has rows, unless an earlier seed started and never finished:
 * `seed.started` is written to app_state before the first row and `seed.completed` after the last, so a
 * start that finds `seed.started` without `seed.completed` knows the previous seed crashed, and finishes it
 * with the plan it began with (every step skips what already exists). Returns true when it seeded anything.
 */
export async function seedIfEmpty(options: { demo: boolean; password: string }): Promise<boolean> {
  await db();
  if (await readAppState(SEED_COMPLETED)) return false;
  const started = await readAppState(SEED_STARTED);
  if (!started && (await User.count()) > 0) return false;
  const plan: { startedAt: string; demo: boolean } = started ? JSON.parse(started.value) : { startedAt: new Date().toISOString(), demo: options.demo };
  if (!started) await writeAppState(SEED_STARTED, JSON.stringify(plan));
  const users = await seedDemoUsers(options.password);
  if (plan.demo) {
    const lead = users.find((user) => user.role === 'lead') ?? null;
    await seedDemoScenario(lead?.id ?? null);
  }
  await writeAppState(SEED_COMPLETED, new Date().toISOString());
  return true;
}
