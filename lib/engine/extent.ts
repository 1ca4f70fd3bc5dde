import { AnalysisInputError } from './errors';
import type { TimeKind } from './prepare';

// TEMP engine contract shim (ENGINE owns this file): parseExtent / extentPoints as CONTRACT.md names them.

export type Extent = number | string;
export type ParsedExtent = { kind: 'fraction'; fraction: number } | { kind: 'points'; points: number } | { kind: 'duration'; ms: number };

const DAY = 86_400_000;
const UNIT_MS: Record<string, number> = { Y: 365.2425 * DAY, M: 30.436875 * DAY, W: 7 * DAY, D: DAY, h: 3_600_000, m: 60_000, s: 1000 };
const DURATION = /^P(?:(\d+(?:\.\d+)?)Y)?(?:(\d+(?:\.\d+)?)M)?(?:(\d+(?:\.\d+)?)W)?(?:(\d+(?:\.\d+)?)D)?(?:T(?:(\d+(?:\.\d+)?)H)?(?:(\d+(?:\.\d+)?)M)?(?:(\d+(?:\.\d+)?)S)?)?$/;

export function parseExtent(extent: Extent): ParsedExtent {
  if (typeof extent === 'number') return { kind: 'fraction', fraction: extent };
  const text = extent.trim();
  const points = /^(\d+)\s*(?:points?|pts)$/i.exec(text);
  if (points) return { kind: 'points', points: Number(points[1]) };
  const d = DURATION.exec(text);
  if (d && text !== 'P' && !text.endsWith('T')) {
    const units = ['Y', 'M', 'W', 'D', 'h', 'm', 's'];
    return { kind: 'duration', ms: units.reduce((sum, u, i) => sum + (d[i + 1] ? Number(d[i + 1]) * UNIT_MS[u] : 0), 0) };
  }
  throw new AnalysisInputError(`"${extent}" is not a fraction, "<n> points" or an ISO 8601 duration`);
}

export function extentPoints(extent: Extent, stretchPoints: number, interval: number, timeKind: TimeKind): number {
  const p = parseExtent(extent);
  if (p.kind === 'fraction') return p.fraction * stretchPoints;
  if (p.kind === 'points') return p.points;
  if (timeKind !== 'utc-ms') throw new AnalysisInputError('a duration needs calendar timestamps');
  return p.ms / interval;
}
