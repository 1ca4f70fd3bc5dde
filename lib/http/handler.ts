import { NextResponse } from 'next/server';
import { ZodError } from 'zod';
import { HttpError } from './errors';

export interface ErrorBody {
  error: { code: string; message: string; fields?: Record<string, string[]> };
}

function errorResponse(status: number, code: string, message: string, fields?: Record<string, string[]>) {
  const body: ErrorBody = { error: { code, message, ...(fields ? { fields } : {}) } };
  return NextResponse.json(body, { status });
}

/** Field errors keyed by dotted path, the shape forms and API clients both read. */
export function zodFieldErrors(error: ZodError): Record<string, string[]> {
  const fields: Record<string, string[]> = {};
  for (const issue of error.issues) {
    const key = issue.path.length ? issue.path.join('.') : '_';
    (fields[key] ??= []).push(issue.message);
  }
  return fields;
}

/**
 * The database could not take the work in time: SQLite's busy timeout; on PostgreSQL the same wait bounded by
 * `lock_timeout` (55P03, see writeTransaction), a deadlock or serialization failure the caller may retry (40P01,
 * 40001), or no pool connection free in time.
 */
function isBusy(error: unknown): boolean {
  const code = String((error as { parent?: { code?: string } })?.parent?.code ?? '');
  if (['55P03', '40P01', '40001'].includes(code)) return true;
  const text = String((error as { message?: string })?.message ?? '') + String((error as { name?: string })?.name ?? '') + code;
  return /SQLITE_BUSY|database is locked|ConnectionAcquireTimeout/i.test(text);
}

/** Turns any thrown value into the JSON error contract; unknown errors are logged and never leak details. */
function toErrorResponse(error: unknown) {
  if (error instanceof HttpError) return errorResponse(error.status, error.code, error.message, error.fields);
  if (error instanceof ZodError) return errorResponse(422, 'invalid', 'Some fields are not valid.', zodFieldErrors(error));
  if (isBusy(error)) return errorResponse(503, 'unavailable', 'The database is busy; try again in a moment.');
  console.error('[brinkwatch] unhandled error', error);
  return errorResponse(500, 'internal', 'Something went wrong on our side. It has been logged.');
}

type RouteContext<P> = { params: Promise<P> };

/**
 * Wraps a route handler so every failure answers with the JSON error contract. Authorisation is NOT done here:
 * each handler calls `requireRole` (lib/auth/guard.ts) as its first statement, visibly.
 */
export function handle<P = Record<string, string>>(fn: (request: Request, context: RouteContext<P>) => Promise<Response>) {
  return async (request: Request, context: RouteContext<P>): Promise<Response> => {
    try {
      return await fn(request, context);
    } catch (error) {
      return toErrorResponse(error);
    }
  };
}
