import { afterAll, beforeAll, describe, expect, it, vi } from 'vitest';
import { useTempDataDir } from '../support/temp-db';

// A fresh database for this file, chosen before any model module opens one; the cheapest bcrypt cost allowed.
useTempDataDir('bw-demo-seed-');
process.env.BCRYPT_COST = '10';
const { migrateUp } = await import('@/migrations');
const { AlertRule, AppState, Observation, Series, SettingsChange, Mark, Site, User, Watch, closeDatabase, db } = await import('@/models');
const { verifyPassword } = await import('@/lib/auth/password');
const { DEMO_SITE_PLACES, DEMO_SITE_RULES, buildDemoScenario } = await import('@/lib/demo/scenario');
const { DEMO_USERS, seedDemoScenario, seedIfEmpty } = await import('@/lib/demo/seed');

const PASSWORD = 'demo-seed-test-pw';
// The records end on the current day: a frozen clock keeps the expectation and the seed on the same day.
const NOW = new Date('2031-05-17T15:42:07Z');
vi.useFakeTimers({ now: NOW, toFake: ['Date'] });
const expected = buildDemoScenario(NOW);
const expectedObservations = expected.reduce((sum, s) => sum + s.values.filter((v) => !Number.isNaN(v)).length, 0);

async function counts() {
  return {
    users: await User.count(),
    series: await Series.count(),
    observations: await Observation.count(),
    rules: await AlertRule.count(),
    marks: await Mark.count(),
    watches: await Watch.count(),
  };
}

const FULL = {
  users: 4,
  series: expected.length,
  observations: expectedObservations,
  rules: expected.reduce((sum, s) => sum + s.rules.length, 0) + DEMO_SITE_RULES.length,
  marks: expected.reduce((sum, s) => sum + s.marks.length, 0),
  watches: 2 * expected.length,
};

beforeAll(async () => {
  await migrateUp();
  await db();
});
afterAll(async () => {
  vi.useRealTimers();
  await closeDatabase();
});

describe('seedIfEmpty', () => {
  it('leaves an installation that already has users alone', async () => {
    const someone = await User.create({ email: 'someone@example.org', name: 'Someone', passwordHash: null, role: 'admin' });
    expect(await seedIfEmpty({ demo: true, password: PASSWORD })).toBe(false);
    expect(await counts()).toMatchObject({ users: 1, series: 0 });
    await someone.destroy();
  });

  it('seeds users and the demo network once, with every count matching the scenario', async () => {
    expect(await seedIfEmpty({ demo: true, password: PASSWORD })).toBe(true);
    expect(await counts()).toEqual(FULL);
    for (const account of DEMO_USERS) {
      const user = await User.findOne({ where: { email: account.email } });
      expect(user?.role).toBe(account.role);
      expect(await verifyPassword(PASSWORD, user!.passwordHash)).toBe(true);
    }
    const lead = await User.findOne({ where: { email: 'lead@brinkwatch.test' } });
    const analyst = await User.findOne({ where: { email: 'analyst@brinkwatch.test' } });
    for (const demo of expected) {
      const series = await Series.findOne({ where: { slug: demo.input.slug } });
      expect(series).not.toBeNull();
      expect(series!.needsAnalysis).toBe(true);
      expect(series!.dataChangedAt).toBeInstanceOf(Date);
      expect(series!.settings).toEqual(demo.input.settings);
      expect(await SettingsChange.count({ where: { seriesId: series!.id } })).toBe(1);
      const stored = await Observation.findAll({ where: { seriesId: series!.id }, order: [['t', 'ASC']], raw: true });
      const present = demo.values.reduce<number[]>((list, v, i) => (Number.isNaN(v) ? list : (list.push(i), list)), []);
      expect(stored.map((o) => Number(o.t))).toEqual(present.map((i) => demo.times[i]));
      expect(stored.map((o) => o.value)).toEqual(present.map((i) => demo.values[i]));
      const rules = await AlertRule.findAll({ where: { seriesId: series!.id }, raw: true });
      expect(rules.map((r) => ({ indicator: r.indicator, minTau: r.minTau, severity: r.severity, createdBy: r.createdBy }))).toEqual(
        demo.rules.map((r) => ({ indicator: r.indicator, minTau: r.minTau, severity: r.severity, createdBy: lead!.id })),
      );
      const marks = await Mark.findAll({ where: { seriesId: series!.id }, raw: true });
      expect(marks.map((m) => [Number(m.at), m.kind])).toEqual(demo.marks.map((m) => [m.at, m.kind]));
      const watchers = await Watch.findAll({ where: { seriesId: series!.id }, raw: true });
      expect(watchers.map((w) => [w.userId, w.mode]).sort()).toEqual(
        [
          [lead!.id, 'immediate'],
          [analyst!.id, 'immediate'],
        ].sort(),
      );
    }
    // The invented sites carry their places, and every demo series sits at one of them.
    const sites = await Site.findAll({ order: [['name', 'ASC']], raw: true });
    expect(sites.map((site) => [site.name, site.latitude, site.longitude])).toEqual(
      [...DEMO_SITE_PLACES].sort((a, b) => a.name.localeCompare(b.name)).map((place) => [place.name, place.latitude, place.longitude]),
    );
    expect(await Series.count({ where: { siteId: null } })).toBe(0);
    // and the site rule on the site-level indicators sits on its site, looking for a rise
    for (const { site: name, rule } of DEMO_SITE_RULES) {
      const site = await Site.findOne({ where: { name } });
      const stored = await AlertRule.findAll({ where: { siteId: site!.id }, raw: true });
      expect(stored.map((r) => [r.indicator, r.direction, r.seriesId, r.createdBy])).toEqual([[rule.indicator, 'rising', null, lead!.id]]);
    }
    expect(await AppState.findByPk('seed.completed')).not.toBeNull();
  });

  it('never seeds twice', async () => {
    expect(await seedIfEmpty({ demo: true, password: PASSWORD })).toBe(false);
    expect(await counts()).toEqual(FULL);
    expect(await seedDemoScenario(null)).toEqual({ series: 0, observations: 0 });
    expect(await counts()).toEqual(FULL);
  });

  it('finishes a seed that crashed half-way on the next start', async () => {
    // What a crash leaves: the guard started but not completed, one series registered but not yet filled
    // (its fill is one transaction, so all of it is missing), a later series not registered at all.
    await AppState.destroy({ where: { key: 'seed.completed' } });
    const [half, missing] = await Promise.all(expected.slice(-2).map((s) => Series.findOne({ where: { slug: s.input.slug } })));
    const where = { seriesId: half!.id };
    await Promise.all([Observation.destroy({ where }), AlertRule.destroy({ where }), Mark.destroy({ where }), Watch.destroy({ where })]);
    await missing!.destroy();
    await User.destroy({ where: { email: 'viewer@brinkwatch.test' } });
    expect(await seedIfEmpty({ demo: true, password: PASSWORD })).toBe(true);
    expect(await counts()).toEqual(FULL);
    expect(await AppState.findByPk('seed.completed')).not.toBeNull();
    expect(await seedIfEmpty({ demo: true, password: PASSWORD })).toBe(false);
  });
});
