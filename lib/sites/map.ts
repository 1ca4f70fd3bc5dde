/** Where sites sit on the small map of the sites page: plain geometry, no tiles, no network. Browser-safe. */

/** Mean Earth radius R1 = 6371.0088 km (IUGG; Moritz 2000, Geodetic Reference System 1980, J. Geodesy 74:128). */
export const EARTH_RADIUS_KM = 6371.0088;
const RAD = Math.PI / 180;

export interface Placeable {
  slug: string;
  name: string;
  latitude: number | null;
  longitude: number | null;
}

export interface MapPoint {
  slug: string;
  name: string;
  x: number;
  y: number;
}

export interface SiteMap {
  width: number;
  height: number;
  points: MapPoint[];
  /** a scale bar of `km` kilometres drawn `px` long; null when no site has a position */
  scale: { km: number; px: number } | null;
  /** names of the sites without a position */
  unplaced: string[];
}

/**
 * Great-circle distance on the sphere of radius R by the haversine formula,
 * d = 2R·asin √(sin²(Δφ/2) + cos φ1 cos φ2 sin²(Δλ/2)). O(1). Source: Sinnott 1984, "Virtues of the Haversine",
 * Sky & Telescope 68(2):159.
 */
export function haversineKm(lat1: number, lon1: number, lat2: number, lon2: number): number {
  const h = Math.sin(((lat2 - lat1) * RAD) / 2) ** 2 + Math.cos(lat1 * RAD) * Math.cos(lat2 * RAD) * Math.sin(((lon2 - lon1) * RAD) / 2) ** 2;
  return 2 * EARTH_RADIUS_KM * Math.asin(Math.min(1, Math.sqrt(h)));
}

/** The largest 1, 2 or 5 × 10^k not above `limit` (common practice for scale bars and axis steps). */
export function roundScale(limit: number): number {
  const power = 10 ** Math.floor(Math.log10(limit));
  return [5, 2, 1].map((m) => m * power).find((v) => v <= limit) ?? power;
}

/** Longitude difference wrapped into [−180, 180), so sites either side of the antimeridian stay neighbours. */
function wrap(degrees: number): number {
  return ((((degrees + 180) % 360) + 360) % 360) - 180;
}

/**
 * Places sites by an equirectangular projection about their centre: x = R·Δλ·cos φ0, y = R·Δφ (kilometres), scaled
 * into the box with equal scale on both axes. Distortion grows with the spread of latitudes (the scale along x is
 * exact only at φ0), which is small for a programme's sites; the scale bar, a round length up to a quarter of the
 * width, holds at the centre latitude. A spread below `minSpanKm` is widened so one site or a cluster stays
 * readable. O(sites). Source: Snyder 1987, Map Projections — A Working Manual, USGS PP 1395, §12 (equidistant
 * cylindrical).
 */
export function siteMap(sites: Placeable[], width = 640, height = 360, padding = 28, minSpanKm = 2): SiteMap {
  const placed = sites.filter((s): s is Placeable & { latitude: number; longitude: number } => s.latitude !== null && s.longitude !== null);
  const unplaced = sites.filter((s) => s.latitude === null || s.longitude === null).map((s) => s.name);
  if (placed.length === 0) return { width, height, points: [], scale: null, unplaced };
  const lat0 = placed.reduce((sum, s) => sum + s.latitude, 0) / placed.length;
  // Circular mean of longitudes, so a network across the antimeridian is centred on it.
  const lon0 =
    Math.atan2(
      placed.reduce((sum, s) => sum + Math.sin(s.longitude * RAD), 0),
      placed.reduce((sum, s) => sum + Math.cos(s.longitude * RAD), 0),
    ) / RAD;
  const km = placed.map((s) => ({
    site: s,
    x: EARTH_RADIUS_KM * wrap(s.longitude - lon0) * RAD * Math.cos(lat0 * RAD),
    y: EARTH_RADIUS_KM * (s.latitude - lat0) * RAD,
  }));
  const [minX, maxX] = [Math.min(...km.map((p) => p.x)), Math.max(...km.map((p) => p.x))];
  const [minY, maxY] = [Math.min(...km.map((p) => p.y)), Math.max(...km.map((p) => p.y))];
  const innerW = width - 2 * padding;
  const innerH = height - 2 * padding;
  const pxPerKm = Math.min(innerW / Math.max(maxX - minX, minSpanKm), innerH / Math.max(maxY - minY, minSpanKm));
  const midX = (minX + maxX) / 2;
  const midY = (minY + maxY) / 2;
  const points = km.map(({ site, x, y }) => ({
    slug: site.slug,
    name: site.name,
    x: width / 2 + (x - midX) * pxPerKm,
    y: height / 2 - (y - midY) * pxPerKm,
  }));
  const barKm = roundScale(innerW / 4 / pxPerKm);
  return { width, height, points, scale: { km: barKm, px: barKm * pxPerKm }, unplaced };
}

/** "59.9139° N, 10.7522° E" (four decimals, about 11 m), or "no position". */
export function formatCoordinates(latitude: number | null, longitude: number | null): string {
  if (latitude === null || longitude === null) return 'no position';
  const part = (value: number, positive: string, negative: string) => `${Math.abs(value).toFixed(4)}° ${value >= 0 ? positive : negative}`;
  return `${part(latitude, 'N', 'S')}, ${part(longitude, 'E', 'W')}`;
}
