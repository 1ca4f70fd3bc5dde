import { parseInstantParam } from '@/lib/intake/time-formats';
import { UnprocessableError } from './errors';

/** from/to of a query (ISO 8601, in the series' zone without an offset, or epoch ms) as instants; a bad one is a 422 naming it. */
export function queryRange(query: { from?: string; to?: string }, zone: string): { from?: number; to?: number } {
  const instant = (name: 'from' | 'to') => {
    const raw = query[name];
    if (raw === undefined) return undefined;
    const parsed = parseInstantParam(raw, zone);
    if (!parsed.ok) throw new UnprocessableError('Some fields are not valid.', { [name]: [`Give ISO 8601 or epoch milliseconds: ${parsed.reason}`] });
    return parsed.t;
  };
  return { from: instant('from'), to: instant('to') };
}
