import 'server-only';
import { notFound } from 'next/navigation';
import { NotFoundError } from './errors';

/**
 * For pages: the record `load` reads, or the app's 404 page (HTTP 404) when it names nothing, as the API answers
 * 404 for the same address. Any other failure goes on to the segment's error page.
 */
export async function foundOr404<T>(load: () => Promise<T>): Promise<T> {
  try {
    return await load();
  } catch (error) {
    if (error instanceof NotFoundError) notFound();
    throw error;
  }
}
