import { NotFoundError } from './errors';

/** A numeric id from a route segment; anything else cannot name a record, so it answers 404 like a missing one. */
export function idParam(value: string, what: string): number {
  if (!/^[1-9]\d{0,15}$/.test(value)) throw new NotFoundError(what);
  return Number(value);
}
