import { PayloadTooLargeError, UnprocessableError, UnsupportedMediaTypeError } from '@/lib/http/errors';
import { isJsonContentType, readLimitedBytes, readLimitedText } from '@/lib/http/body';
import { pushedObservationsSchema, uploadMappingSchema, type PushedObservation, type UploadMapping } from '@/lib/schemas/observation';
import { INTAKE_BODY_LIMIT, MAX_REASON_LENGTH } from './choices';
import { contentHashOf } from './content-hash';

export interface IntakeBody {
  /** the CSV as sent: its bytes are decoded by the reader, which chooses and reports the encoding */
  csv?: Uint8Array;
  points?: PushedObservation[];
  fileName: string | null;
  contentHash: string;
  mapping: UploadMapping;
  /** why the data were sent (a reprocessing note): the multipart `reason` part or the `reason` query parameter */
  reason: string | null;
}

/** A sender's reason, trimmed; null when none was given, 422 when too long. */
function parseReason(raw: FormDataEntryValue | string | null): string | null {
  if (typeof raw !== 'string' || raw.trim() === '') return null;
  const reason = raw.trim();
  if (reason.length > MAX_REASON_LENGTH) {
    throw new UnprocessableError('Some fields are not valid.', { reason: [`Give at most ${MAX_REASON_LENGTH} characters.`] });
  }
  return reason;
}

function parseMapping(raw: string | null): UploadMapping {
  if (!raw) return {};
  let parsed: unknown;
  try {
    parsed = JSON.parse(raw);
  } catch {
    throw new UnprocessableError('The mapping is not valid JSON.');
  }
  return uploadMappingSchema.parse(parsed);
}

/**
 * Reads an intake body: `text/csv` (mapping as JSON in the `mapping` query parameter), `multipart/form-data` with a
 * `file` part and an optional `mapping` part, or — when `allowJson` — a JSON array of `{ time, value }`. 413 above
 * INTAKE_BODY_LIMIT, 415 for any other content type.
 */
export async function readIntakeBody(request: Request, options: { allowJson: boolean }): Promise<IntakeBody> {
  const type = (request.headers.get('content-type') || '').toLowerCase();
  const query = new URL(request.url).searchParams;
  const queryMapping = query.get('mapping');
  const queryReason = parseReason(query.get('reason'));
  if (type.startsWith('text/csv') || type.startsWith('text/plain')) {
    const bytes = await readLimitedBytes(request, INTAKE_BODY_LIMIT);
    return { csv: bytes, fileName: null, contentHash: contentHashOf(bytes), mapping: parseMapping(queryMapping), reason: queryReason };
  }
  if (type.startsWith('multipart/form-data')) {
    const raw = await readLimitedText(request, INTAKE_BODY_LIMIT + 64 * 1024);
    const form = await new Response(raw, { headers: { 'content-type': request.headers.get('content-type')! } }).formData().catch(() => {
      throw new UnprocessableError('The multipart body could not be read.');
    });
    const file = form.get('file');
    if (!file || typeof file === 'string') throw new UnprocessableError('Attach the CSV as the "file" part.', { file: ['Required.'] });
    if (file.size > INTAKE_BODY_LIMIT) throw new PayloadTooLargeError(INTAKE_BODY_LIMIT);
    const bytes = new Uint8Array(await file.arrayBuffer());
    const mappingPart = form.get('mapping');
    return {
      csv: bytes,
      fileName: file.name || null,
      contentHash: contentHashOf(bytes),
      mapping: parseMapping(typeof mappingPart === 'string' ? mappingPart : queryMapping),
      reason: parseReason(form.get('reason')) ?? queryReason,
    };
  }
  if (options.allowJson && isJsonContentType(request)) {
    const text = await readLimitedText(request, INTAKE_BODY_LIMIT);
    let parsed: unknown;
    try {
      parsed = JSON.parse(text);
    } catch {
      throw new UnprocessableError('The body is not valid JSON.');
    }
    return { points: pushedObservationsSchema.parse(parsed), fileName: null, contentHash: contentHashOf(text), mapping: {}, reason: queryReason };
  }
  throw new UnsupportedMediaTypeError(options.allowJson ? 'text/csv, multipart/form-data or application/json' : 'text/csv or multipart/form-data');
}
