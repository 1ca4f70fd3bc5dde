import { DataTypes, QueryTypes, type QueryInterface } from 'sequelize';
import { uniqueSlug } from '@/lib/schemas/series';

/**
 * Sites become records of their own. One site is created per distinct non-empty `series.site` name (its time zone
 * the one most of its series use), and `series.site_id` points each series at it. `series.site` stays, holding the
 * site's name (see models/Site.ts), so `down` only drops what `up` added and loses nothing.
 */
export async function up({ context: q }: { context: QueryInterface }): Promise<void> {
  const s = q.sequelize;
  await q.createTable('sites', {
    id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
    slug: { type: DataTypes.STRING, allowNull: false, unique: true },
    name: { type: DataTypes.STRING, allowNull: false, unique: true },
    description: { type: DataTypes.TEXT, allowNull: false, defaultValue: '' },
    latitude: { type: DataTypes.DOUBLE, allowNull: true },
    longitude: { type: DataTypes.DOUBLE, allowNull: true },
    time_zone: { type: DataTypes.STRING, allowNull: false, defaultValue: 'UTC' },
    notes: { type: DataTypes.TEXT, allowNull: false, defaultValue: '' },
    created_at: { type: DataTypes.DATE, allowNull: false },
    updated_at: { type: DataTypes.DATE, allowNull: false },
  });
  // SQLite allows ADD COLUMN with a REFERENCES clause when the default is NULL, and DROP COLUMN removes it again.
  await s.query('ALTER TABLE series ADD COLUMN site_id INTEGER REFERENCES sites(id) ON DELETE SET NULL');
  await s.query('CREATE INDEX series_site_id ON series (site_id)');

  const names = await s.query<{ site: string; time_zone: string }>(
    `SELECT site, time_zone FROM (
       SELECT TRIM(site) AS site, time_zone, ROW_NUMBER() OVER (PARTITION BY TRIM(site) ORDER BY COUNT(*) DESC, time_zone) AS rank
       FROM series WHERE TRIM(site) <> '' GROUP BY TRIM(site), time_zone) AS ranked
     WHERE rank = 1 ORDER BY site`,
    { type: QueryTypes.SELECT },
  );
  const taken = new Set<string>();
  for (const { site, time_zone } of names) {
    const slug = uniqueSlug(site, taken);
    taken.add(slug);
    await s.query(
      `INSERT INTO sites (slug, name, description, latitude, longitude, time_zone, notes, created_at, updated_at)
       VALUES (:slug, :site, '', NULL, NULL, :time_zone, '', CURRENT_TIMESTAMP, CURRENT_TIMESTAMP)`,
      { replacements: { slug, site, time_zone } },
    );
  }
  await s.query('UPDATE series SET site = TRIM(site), site_id = (SELECT id FROM sites WHERE sites.name = TRIM(series.site))');
}

export async function down({ context: q }: { context: QueryInterface }): Promise<void> {
  const s = q.sequelize;
  await s.query('DROP INDEX IF EXISTS series_site_id');
  await s.query('ALTER TABLE series DROP COLUMN site_id');
  await q.dropTable('sites');
}
