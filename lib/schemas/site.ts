import { z } from 'zod';
import { slugSchema, timeZoneSchema } from './series';

const text = (max: number) => z.string().trim().max(max);

/**
 * A site. Latitude and longitude are WGS 84 decimal degrees (north and east positive), both given or both left
 * out: a site with one of them cannot be placed on the map.
 */
const siteFields = {
  name: text(200).min(1),
  description: text(5000),
  latitude: z.number().min(-90).max(90).nullable(),
  longitude: z.number().min(-180).max(180).nullable(),
  timeZone: timeZoneSchema,
  notes: text(5000),
};

const bothOrNeither = (site: { latitude?: number | null; longitude?: number | null }) =>
  (site.latitude === undefined) === (site.longitude === undefined) && (site.latitude === null) === (site.longitude === null);
const BOTH_OR_NEITHER = { message: 'Give both latitude and longitude, or neither.', path: ['longitude'] };

export const siteCreateSchema = z
  .object({
    slug: slugSchema,
    ...siteFields,
    description: siteFields.description.default(''),
    latitude: siteFields.latitude.default(null),
    longitude: siteFields.longitude.default(null),
    timeZone: siteFields.timeZone.default('UTC'),
    notes: siteFields.notes.default(''),
  })
  .strict()
  .refine(bothOrNeither, BOTH_OR_NEITHER);
export type SiteCreateInput = z.input<typeof siteCreateSchema>;

/** PATCH: any subset; the slug stays (addresses and bookmarks keep working). */
export const siteUpdateSchema = z.object(siteFields).partial().strict().refine(bothOrNeither, BOTH_OR_NEITHER);
export type SiteUpdate = z.output<typeof siteUpdateSchema>;

/** The public shape of a site (what the API and the screens carry). */
export interface SiteRecord {
  id: number;
  slug: string;
  name: string;
  description: string;
  latitude: number | null;
  longitude: number | null;
  timeZone: string;
  notes: string;
  seriesCount: number;
}
