import { beforeAll, describe, expect, it } from 'vitest';
import { QueryTypes } from 'sequelize';
import { testDialect, useTempDataDir } from '../support/temp-db';

useTempDataDir('bw-sites-');

const { migrateDown, migrateUp } = await import('@/migrations');
const { AuditEntry, Series, Site, User, db } = await import('@/models');
const { createSeries, updateSeries, presentSeries } = await import('@/lib/series/registry');
const { BULK_MAX_ROWS, checkBulkList, registerBulk } = await import('@/lib/series/bulk');
const { createSite, listSites, updateSite } = await import('@/lib/sites/registry');
const { fetchSitePage } = await import('@/lib/sites/page-data');
const { fetchSeriesOverview } = await import('@/lib/overview');
const { ConflictError, NotFoundError, UnprocessableError } = await import('@/lib/http/errors');
const { hashPassword } = await import('@/lib/auth/password');

let lead: { id: number };

async function siteRows() {
  const sequelize = await db();
  return sequelize.query<{ slug: string; name: string; time_zone: string }>('SELECT slug, name, time_zone FROM sites ORDER BY name', {
    type: QueryTypes.SELECT,
  });
}

beforeAll(async () => {
  await migrateUp();
  await db();
  lead = await User.create({ email: 'lead@example.test', name: 'Lea D', role: 'lead', passwordHash: await hashPassword('lead-password-123') });
});

describe('migration 0015: sites from the site names series carried', () => {
  // A database at a schema before 0015 is a SQLite one: PostgreSQL is supported from the current schema on, and
  // migrations.test.ts runs every migration up, down and up there.
  it.runIf(testDialect() === 'sqlite')('creates one site per distinct non-empty name, points series at it, and goes down and up again', async () => {
    const sequelize = await db();
    await migrateDown('0015-sites');
    const insert = (slug: string, site: string, zone: string) =>
      sequelize.query(
        `INSERT INTO series (slug, name, site, unit, description, interval_ms, time_zone, csv_mapping, settings, duplicate_policy, needs_analysis, created_at, updated_at)
       VALUES (:slug, :slug, :site, '', '', NULL, :zone, '{}', '{}', 'reject', 0, CURRENT_TIMESTAMP, CURRENT_TIMESTAMP)`,
        { replacements: { slug, site, zone } },
      );
    await insert('m-one', 'North basin', 'Europe/Oslo');
    await insert('m-two', 'North basin ', 'Europe/Oslo');
    await insert('m-three', 'North basin', 'UTC');
    await insert('m-four', 'Pier 4', 'UTC');
    await insert('m-five', '', 'UTC');
    await migrateUp();
    expect(await siteRows()).toEqual([
      { slug: 'north-basin', name: 'North basin', time_zone: 'Europe/Oslo' }, // the zone most of its series use
      { slug: 'pier-4', name: 'Pier 4', time_zone: 'UTC' },
    ]);
    const linked = await sequelize.query<{ slug: string; site: string; site_slug: string | null }>(
      'SELECT s.slug, s.site, st.slug AS site_slug FROM series s LEFT JOIN sites st ON st.id = s.site_id ORDER BY s.slug',
      { type: QueryTypes.SELECT },
    );
    expect(linked).toEqual([
      { slug: 'm-five', site: '', site_slug: null },
      { slug: 'm-four', site: 'Pier 4', site_slug: 'pier-4' },
      { slug: 'm-one', site: 'North basin', site_slug: 'north-basin' },
      { slug: 'm-three', site: 'North basin', site_slug: 'north-basin' },
      { slug: 'm-two', site: 'North basin', site_slug: 'north-basin' },
    ]);
    await migrateDown('0015-sites');
    const names = await sequelize.query<{ site: string }>('SELECT site FROM series ORDER BY slug', { type: QueryTypes.SELECT });
    expect(names.map((n) => n.site)).toEqual(['', 'Pier 4', 'North basin', 'North basin', 'North basin']);
    await migrateUp();
    await sequelize.query("DELETE FROM series WHERE slug LIKE 'm-%'");
    await sequelize.query('DELETE FROM sites');
  });
});

describe('a series and its site', () => {
  it('takes a site by id, or by name (creating it), and keeps the name beside the id', async () => {
    const site = await createSite({ slug: 'east-mooring', name: 'East mooring', latitude: 60.1, longitude: 5.2, timeZone: 'Europe/Oslo' }, lead);
    const byId = await createSeries({ slug: 'east-temp', name: 'East temperature', siteId: site.id }, lead);
    expect(presentSeries(byId)).toMatchObject({ siteId: site.id, site: 'East mooring' });
    const byName = await createSeries({ slug: 'west-level', name: 'West level', site: 'West weir', timeZone: 'Europe/Oslo' }, lead);
    const created = await Site.findOne({ where: { name: 'West weir' } });
    expect(created).toMatchObject({ slug: 'west-weir', latitude: null, timeZone: 'Europe/Oslo' }); // the series' zone
    expect(byName.siteId).toBe(created!.id);
    const again = await createSeries({ slug: 'west-temp', name: 'West temperature', site: 'West weir' }, lead);
    expect(again.siteId).toBe(created!.id);
    await expect(createSeries({ slug: 'lost', name: 'Lost', siteId: 99999 }, lead)).rejects.toBeInstanceOf(UnprocessableError);
    expect(await Series.findOne({ where: { slug: 'lost' } })).toBeNull();
  });

  it('moves a series between sites, clears its site, and renames a site in its series', async () => {
    const east = await Site.findOne({ where: { slug: 'east-mooring' } });
    expect((await updateSeries('west-temp', { siteId: east!.id }, lead)).site).toBe('East mooring');
    expect(await updateSeries('west-temp', { siteId: null }, lead)).toMatchObject({ siteId: null, site: '' });
    await updateSite('east-mooring', { name: 'East mooring A' }, lead);
    expect((await Series.findOne({ where: { slug: 'east-temp' } }))!.site).toBe('East mooring A');
    await expect(updateSite('east-mooring', { name: 'West weir' }, lead)).rejects.toBeInstanceOf(ConflictError);
    await expect(updateSite('nowhere', { name: 'X' }, lead)).rejects.toBeInstanceOf(NotFoundError);
    await expect(createSite({ slug: 'west-weir', name: 'Another' }, lead)).rejects.toBeInstanceOf(ConflictError);
    const audit = await AuditEntry.findAll({ where: { entity: 'site' } });
    expect(audit.map((a) => a.action).sort()).toEqual(['site.create', 'site.create', 'site.update']);
  });

  it('lists sites with their active series and shows a site page with the overview rows', async () => {
    const sites = await listSites();
    expect(sites.map((s) => [s.slug, s.seriesCount])).toEqual([
      ['east-mooring', 1],
      ['west-weir', 1],
    ]);
    const page = await fetchSitePage('east-mooring', lead.id);
    expect(page.site.name).toBe('East mooring A');
    expect(page.series.map((row) => row.slug)).toEqual(['east-temp']);
    expect(page.openAlerts).toEqual([]);
    const overview = await fetchSeriesOverview(lead.id);
    expect(overview.rows.find((row) => row.slug === 'west-level')).toMatchObject({ site: 'West weir', siteSlug: 'west-weir' });
    await expect(fetchSitePage('none', lead.id)).rejects.toBeInstanceOf(NotFoundError);
  });
});

describe('bulk registration', () => {
  const HEADER = 'slug,name,site,unit,interval,timeZone,valueColumn';

  it('reports every row: field errors, slugs repeated in the list and slugs already registered', async () => {
    const { report } = await checkBulkList(
      [
        HEADER,
        'bulk-a,Bulk A,South bay,m,PT1H,UTC,level',
        'bulk-b,Bulk B,South bay,m,hourly,UTC,level',
        'bulk-a,Bulk A again,,m,,UTC,',
        'east-temp,Taken,,,,Mars/Olympus,',
        'Bad Slug,,,,,,',
      ].join('\n'),
    );
    expect(report.valid).toBe(false);
    expect(report.listErrors).toEqual([]);
    const errors = Object.fromEntries(report.rows.map((row) => [row.row, Object.keys(row.errors).sort()]));
    expect(errors).toEqual({ 1: [], 2: ['interval'], 3: ['slug'], 4: ['slug', 'timeZone'], 5: ['name', 'slug'] });
    expect(report.rows[2].errors.slug).toEqual(['Also used in row 1 of this list.']);
    expect(report.rows[3].errors.slug).toEqual(['A series with this slug is already registered.']);
    expect(report.newSites).toEqual(['South bay']);
  });

  it('refuses a list with unknown or missing columns before judging rows', async () => {
    const { report } = await checkBulkList('slug,title\nx-y,X');
    expect(report.rows).toEqual([]);
    expect(report.listErrors.join(' ')).toMatch(/Unknown columns: title.*Missing columns: name/);
    expect((await checkBulkList(`${HEADER}\n`)).report.listErrors).toEqual(['The list has no rows.']);
    const long = [HEADER, ...Array.from({ length: BULK_MAX_ROWS + 1 }, (_, i) => `long-${i},Long ${i},,,,,`)].join('\n');
    expect((await checkBulkList(long)).report.listErrors).toEqual([`The list has ${BULK_MAX_ROWS + 1} rows; register at most ${BULK_MAX_ROWS} at once.`]);
  });

  it('registers all or nothing', async () => {
    const before = await Series.count();
    const bad = `${HEADER}\nbulk-c,Bulk C,South bay,m,PT1H,UTC,level\nbulk-d,,South bay,m,PT1H,UTC,level`;
    await expect(registerBulk(bad, lead, { dryRun: false })).rejects.toMatchObject({ status: 422, fields: { '2.name': expect.any(Array) } });
    expect(await Series.count()).toBe(before);
    expect(await Site.findOne({ where: { name: 'South bay' } })).toBeNull();

    const good = `\uFEFF${HEADER}\r\nbulk-c,Bulk C,South bay,m,PT1H,UTC,level\r\nbulk-d,Bulk D,South bay,m,PT30M,Europe/Oslo,1\r\n\r\n`;
    const dry = await registerBulk(good, lead, { dryRun: true });
    expect(dry).toMatchObject({ valid: true, created: 0 });
    expect(await Series.count()).toBe(before);
    const done = await registerBulk(good, lead, { dryRun: false });
    expect(done.created).toBe(2);
    const [c, d] = await Promise.all([Series.findOne({ where: { slug: 'bulk-c' } }), Series.findOne({ where: { slug: 'bulk-d' } })]);
    expect(c).toMatchObject({ site: 'South bay', intervalMs: 3_600_000, csvMapping: { timeColumn: 0, valueColumn: 'level', timeFormat: 'iso8601' } });
    expect(d).toMatchObject({ siteId: c!.siteId, timeZone: 'Europe/Oslo', csvMapping: { valueColumn: 1 } });
    expect(Number(d!.intervalMs)).toBe(1_800_000);
    expect(await AuditEntry.count({ where: { action: 'series.bulk-create' } })).toBe(1);
    await expect(registerBulk(good, lead, { dryRun: false })).rejects.toMatchObject({ status: 422 });
  });
});
