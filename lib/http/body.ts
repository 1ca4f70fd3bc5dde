import type { ZodType } from 'zod';
import { PayloadTooLargeError, UnprocessableError, UnsupportedMediaTypeError } from './errors';

/** Default limit for JSON bodies of ordinary API calls; uploads set their own. */
const JSON_BODY_LIMIT = 1024 * 1024;
/** Deeper nesting than any of our schemas needs is refused before it reaches zod. */
const MAX_JSON_DEPTH = 20;

/** Reads the body's bytes, refusing it once it passes `limit` bytes (also when Content-Length lies or is absent). */
export async function readLimitedBytes(request: Request, limit: number): Promise<Buffer> {
  const declared = Number(request.headers.get('content-length') || 0);
  if (declared > limit) throw new PayloadTooLargeError(limit);
  if (!request.body) return Buffer.alloc(0);
  const reader = request.body.getReader();
  const chunks: Uint8Array[] = [];
  let total = 0;
  for (;;) {
    const { done, value } = await reader.read();
    if (done) break;
    total += value.byteLength;
    if (total > limit) {
      await reader.cancel();
      throw new PayloadTooLargeError(limit);
    }
    chunks.push(value);
  }
  return Buffer.concat(chunks);
}

/** The body as UTF-8 text, within `limit` bytes (see readLimitedBytes). */
export async function readLimitedText(request: Request, limit: number): Promise<string> {
  return (await readLimitedBytes(request, limit)).toString('utf8');
}

function depthOf(value: unknown, depth = 0): number {
  if (depth > MAX_JSON_DEPTH) return depth;
  if (value === null || typeof value !== 'object') return depth;
  let deepest = depth + 1;
  for (const child of Object.values(value as Record<string, unknown>)) {
    deepest = Math.max(deepest, depthOf(child, depth + 1));
    if (deepest > MAX_JSON_DEPTH) break;
  }
  return deepest;
}

export function isJsonContentType(request: Request): boolean {
  return /^application\/(?:[\w.+-]+\+)?json\b/i.test(request.headers.get('content-type') || '');
}

/** Parses a JSON body with `schema`: 415 for another content type, 413 past the limit, 422 for bad JSON or fields. */
export async function readJson<T>(request: Request, schema: ZodType<T>, limit = JSON_BODY_LIMIT): Promise<T> {
  if (!isJsonContentType(request)) throw new UnsupportedMediaTypeError('application/json');
  const text = await readLimitedText(request, limit);
  let parsed: unknown;
  try {
    parsed = text.trim() === '' ? {} : JSON.parse(text);
  } catch {
    throw new UnprocessableError('The body is not valid JSON.');
  }
  if (depthOf(parsed) > MAX_JSON_DEPTH) throw new UnprocessableError(`The JSON is nested deeper than ${MAX_JSON_DEPTH} levels.`);
  return schema.parse(parsed);
}

/** Parses URL search parameters with `schema` (422 with field errors on failure). */
export function readQuery<T>(request: Request, schema: ZodType<T>): T {
  const params = Object.fromEntries(new URL(request.url).searchParams.entries());
  return schema.parse(params);
}
