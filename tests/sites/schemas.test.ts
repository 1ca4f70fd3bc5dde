import { describe, expect, it } from 'vitest';
import { bulkRowSchema, intervalTextSchema, seriesCreateSchema, seriesUpdateSchema, suggestSlug, uniqueSlug } from '@/lib/schemas/series';
import { siteCreateSchema, siteUpdateSchema } from '@/lib/schemas/site';
import { EARTH_RADIUS_KM, formatCoordinates, haversineKm, roundScale, siteMap } from '@/lib/sites/map';

describe('slugs suggested from names', () => {
  it('drops accents, lower-cases and joins words by single hyphens', () => {
    expect(suggestSlug('Lac Léman – Station 3')).toBe('lac-leman-station-3');
    expect(suggestSlug('  Ærøskøbing Straße  ')).toBe('aeroskobing-strasse'); // Æ, ø and ß have no NFKD decomposition
    expect(suggestSlug('Северная станция')).toBe('');
    expect(suggestSlug('x'.repeat(100))).toHaveLength(64);
  });

  it('makes a slug unique with -2, -3 and falls back when too little is left', () => {
    expect(uniqueSlug('North basin', new Set())).toBe('north-basin');
    expect(uniqueSlug('North basin', new Set(['north-basin', 'north-basin-2']))).toBe('north-basin-3');
    expect(uniqueSlug('Северная', new Set(['site']))).toBe('site-2');
    expect(uniqueSlug('a'.repeat(80), new Set(['a'.repeat(64)]))).toHaveLength(64);
  });
});

describe('sampling interval as an ISO 8601 duration (ISO 8601-1:2019, Sec. 5.5.2)', () => {
  it('reads PT15M, PT1H, P1D and P1W into milliseconds and empty as irregular', () => {
    expect(intervalTextSchema.parse('PT15M')).toBe(15 * 60_000);
    expect(intervalTextSchema.parse('PT1H')).toBe(3_600_000);
    expect(intervalTextSchema.parse(' P1D ')).toBe(86_400_000);
    expect(intervalTextSchema.parse('P1W')).toBe(7 * 86_400_000);
    expect(intervalTextSchema.parse('')).toBeNull();
  });

  it('refuses what is not a duration (a fraction or points are extents, not intervals)', () => {
    for (const bad of ['15 minutes', '0.5', '200 points', 'P', 'PT']) expect(intervalTextSchema.safeParse(bad).success, bad).toBe(false);
  });
});

describe('a bulk row is read into what POST /api/series takes', () => {
  it('maps cells, column positions, the interval and analysis overrides', () => {
    const row = bulkRowSchema.parse({
      slug: 'north-temp',
      name: ' North temperature ',
      site: 'North basin',
      unit: '°C',
      interval: 'PT1H',
      timeZone: 'Europe/Oslo',
      timeColumn: '0',
      valueColumn: 'temp_c',
      timeFormat: 'iso8601',
      duplicatePolicy: 'replace',
      window: '0.25',
      span: '2000 points',
      surrogates: '499',
    });
    expect(row).toMatchObject({
      slug: 'north-temp',
      name: 'North temperature',
      site: 'North basin',
      unit: '°C',
      intervalMs: 3_600_000,
      timeZone: 'Europe/Oslo',
      csvMapping: { timeColumn: 0, valueColumn: 'temp_c', timeFormat: 'iso8601' },
      duplicatePolicy: 'replace',
    });
    expect(row.settings).toMatchObject({ window: 0.25, span: '2000 points', surrogates: 499 });
  });

  it('gives the defaults of a single registration to empty and missing cells', () => {
    expect(bulkRowSchema.parse({ slug: 'a-b', name: 'A B', unit: '' })).toEqual(seriesCreateSchema.parse({ slug: 'a-b', name: 'A B', intervalMs: null }));
  });

  it('names the field of each error', () => {
    const result = bulkRowSchema.safeParse({ slug: 'Bad Slug', name: '', interval: 'hourly', timeZone: 'Mars/Olympus', timeFormat: 'julian' });
    expect(result.success).toBe(false);
    const paths = new Set(result.error!.issues.map((issue) => issue.path.join('.')));
    // The interval is read first; the other fields are checked by seriesCreateSchema only once it reads.
    expect(paths).toEqual(new Set(['interval']));
    const second = bulkRowSchema.safeParse({ slug: 'Bad Slug', name: '', timeZone: 'Mars/Olympus', timeFormat: 'julian' });
    expect(new Set(second.error!.issues.map((issue) => issue.path.join('.')))).toEqual(new Set(['slug', 'name', 'timeZone', 'csvMapping.timeFormat']));
  });
});

describe('site fields', () => {
  it('takes WGS 84 degrees within range, both or neither', () => {
    expect(siteCreateSchema.parse({ slug: 'pier-4', name: 'Pier 4' })).toMatchObject({ latitude: null, longitude: null, timeZone: 'UTC' });
    expect(siteCreateSchema.safeParse({ slug: 'pier-4', name: 'Pier 4', latitude: 59.9, longitude: 10.7 }).success).toBe(true);
    expect(siteCreateSchema.safeParse({ slug: 'pier-4', name: 'Pier 4', latitude: 91, longitude: 0 }).success).toBe(false);
    expect(siteCreateSchema.safeParse({ slug: 'pier-4', name: 'Pier 4', latitude: 0, longitude: 180.5 }).success).toBe(false);
    expect(siteCreateSchema.safeParse({ slug: 'pier-4', name: 'Pier 4', latitude: 10 }).success).toBe(false);
    expect(siteUpdateSchema.safeParse({ latitude: null, longitude: null }).success).toBe(true);
    expect(siteUpdateSchema.safeParse({ longitude: 3 }).success).toBe(false);
    expect(siteUpdateSchema.safeParse({ slug: 'renamed' }).success).toBe(false);
  });

  it('lets a series name its site by id or by name, and clear it', () => {
    expect(seriesCreateSchema.parse({ slug: 'ab', name: 'AB', siteId: 3 }).siteId).toBe(3);
    expect(seriesUpdateSchema.parse({ siteId: null })).toEqual({ siteId: null });
    expect(seriesUpdateSchema.safeParse({ siteId: 0 }).success).toBe(false);
  });
});

describe('the sites map', () => {
  it('measures one minute of latitude as about one international nautical mile (1852 m; SI Brochure 8th ed. 2006, Table 8 — table number from memory)', () => {
    expect(haversineKm(45, 7, 45 + 1 / 60, 7)).toBeCloseTo((2 * Math.PI * EARTH_RADIUS_KM) / 360 / 60, 9);
    expect(Math.abs(haversineKm(45, 7, 45 + 1 / 60, 7) - 1.852) / 1.852).toBeLessThan(0.001);
  });

  it('rounds scale bars to 1, 2 or 5 × 10^k (common practice)', () => {
    expect([0.7, 1, 3, 7.9, 19, 49, 120].map(roundScale)).toEqual([0.5, 1, 2, 5, 10, 20, 100]);
  });

  it('keeps distances of a regional network to within 0.5 % of the great-circle distance, and the bar to its length', () => {
    const sites = [
      { slug: 'a', name: 'A', latitude: 60.0, longitude: 10.0 },
      { slug: 'b', name: 'B', latitude: 60.3, longitude: 10.6 },
      { slug: 'c', name: 'C', latitude: 59.8, longitude: 10.4 },
      { slug: 'd', name: 'D', latitude: null, longitude: null },
    ];
    const map = siteMap(sites, 640, 360, 28);
    expect(map.points).toHaveLength(3);
    expect(map.unplaced).toEqual(['D']);
    const pxPerKm = map.scale!.px / map.scale!.km;
    for (const [i, j] of [
      [0, 1],
      [0, 2],
      [1, 2],
    ]) {
      const px = Math.hypot(map.points[i].x - map.points[j].x, map.points[i].y - map.points[j].y);
      const km = haversineKm(sites[i].latitude!, sites[i].longitude!, sites[j].latitude!, sites[j].longitude!);
      expect(Math.abs(px / pxPerKm - km) / km).toBeLessThan(0.005);
    }
    for (const p of map.points) {
      expect(p.x).toBeGreaterThanOrEqual(28 - 1e-9);
      expect(p.x).toBeLessThanOrEqual(640 - 28 + 1e-9);
      expect(p.y).toBeGreaterThanOrEqual(28 - 1e-9);
      expect(p.y).toBeLessThanOrEqual(360 - 28 + 1e-9);
    }
    expect(map.points.find((p) => p.slug === 'b')!.y).toBeLessThan(map.points.find((p) => p.slug === 'a')!.y); // north is up
  });

  it('keeps sites either side of the antimeridian together, and places one site in the middle', () => {
    const map = siteMap([
      { slug: 'w', name: 'W', latitude: -17, longitude: 179.9 },
      { slug: 'e', name: 'E', latitude: -17, longitude: -179.9 },
    ]);
    expect(Math.abs(map.points[0].x - map.points[1].x)).toBeLessThan(640);
    expect(map.points[0].x).toBeLessThan(map.points[1].x);
    const one = siteMap([{ slug: 'o', name: 'O', latitude: 1, longitude: 2 }]);
    expect(one.points[0]).toMatchObject({ x: 320, y: 180 });
    expect(siteMap([{ slug: 'o', name: 'O', latitude: null, longitude: null }]).scale).toBeNull();
  });

  it('writes coordinates with hemispheres', () => {
    expect(formatCoordinates(-33.8568, 151.2153)).toBe('33.8568° S, 151.2153° E');
    expect(formatCoordinates(null, 3)).toBe('no position');
  });
});
