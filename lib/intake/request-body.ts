import { PayloadTooLargeError, UnprocessableError, UnsupportedMediaTypeError } from '@/lib/http/errors';
import { isJsonContentType, readLimitedBytes, readLimitedText } from '@/lib/http/body';
import { pushedObservationsSchema, uploadMappingSchema, type PushedObservation, type UploadMapping } from '@/lib/schemas/observation';
import { INTAKE_BODY_LIMIT, MAX_REASON_LENGTH } from './choices';
import { contentHashOf } from './content-hash';
import type { DuplicatePolicy } from './pipeline';

export interface IntakeBody {
  /** the file as sent: a CSV's bytes are decoded by the reader, which chooses and reports the encoding; bytes with a netCDF signature are read as netCDF */
  csv?: Uint8Array;
  points?: PushedObservation[];
  fileName: string | null;
  contentHash: string;
  mapping: UploadMapping;
  /** why the data were sent (a reprocessing note): the multipart `reason` part or the `reason` query parameter */
  reason: string | null;
  /**
   * this delivery's duplicate policy (multipart `duplicatePolicy` part or query parameter): `replace` sends
   * reprocessed data whose values replace the stored ones whatever the series' policy; null: the series' policy
   */
  duplicatePolicy: DuplicatePolicy | null;
}

function parsePolicy(raw: FormDataEntryValue | string | null): DuplicatePolicy | null {
  if (typeof raw !== 'string' || raw === '') return null;
  if (raw === 'replace' || raw === 'reject') return raw;
  throw new UnprocessableError('Some fields are not valid.', { duplicatePolicy: ['Give "replace" or "reject".'] });
}

/**
 * What a delivery that is to be stored carries besides its rows: its duplicate policy, the reason, and the content
 * hash it is recognised by. A reprocessing upload (`replace`) must say why, since the reason is what the data
 * version keeps beside the replaced values (422 on `reason` otherwise), and its hash names the policy: the same
 * file first sent under the series' `reject` and then as reprocessed data is applied the second time too.
 */
export function storedDelivery(body: Pick<IntakeBody, 'duplicatePolicy' | 'reason' | 'contentHash'>): {
  duplicatePolicy: DuplicatePolicy | null;
  reason: string | null;
  contentHash: string;
} {
  if (body.duplicatePolicy === 'replace' && !body.reason) {
    throw new UnprocessableError('Some fields are not valid.', {
      reason: ['Say why these values replace the stored ones (e.g. what reprocessing corrected).'],
    });
  }
  return {
    duplicatePolicy: body.duplicatePolicy,
    reason: body.reason,
    contentHash: body.duplicatePolicy ? `${body.contentHash}:${body.duplicatePolicy}` : body.contentHash,
  };
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
 * `file` part (a CSV or a netCDF file) and an optional `mapping` part (for netCDF `{ "variable": … }`), or — when `allowJson` — a JSON array of `{ time, value }`. 413 above
 * INTAKE_BODY_LIMIT, 415 for any other content type.
 */
export async function readIntakeBody(request: Request, options: { allowJson: boolean }): Promise<IntakeBody> {
  const type = (request.headers.get('content-type') || '').toLowerCase();
  const query = new URL(request.url).searchParams;
  const queryMapping = query.get('mapping');
  const queryReason = parseReason(query.get('reason'));
  const queryPolicy = parsePolicy(query.get('duplicatePolicy'));
  if (type.startsWith('text/csv') || type.startsWith('text/plain')) {
    const bytes = await readLimitedBytes(request, INTAKE_BODY_LIMIT);
    return {
      csv: bytes,
      fileName: null,
      contentHash: contentHashOf(bytes),
      mapping: parseMapping(queryMapping),
      reason: queryReason,
      duplicatePolicy: queryPolicy,
    };
  }
  if (type.startsWith('multipart/form-data')) {
    // Bytes, never text: a netCDF file (or a CSV in Windows-1252) would not survive decoding the body as UTF-8.
    const raw = await readLimitedBytes(request, INTAKE_BODY_LIMIT + 64 * 1024);
    const form = await new Response(new Uint8Array(raw), { headers: { 'content-type': request.headers.get('content-type')! } }).formData().catch(() => {
      throw new UnprocessableError('The multipart body could not be read.');
    });
    const file = form.get('file');
    if (!file || typeof file === 'string') throw new UnprocessableError('Attach the CSV or netCDF file as the "file" part.', { file: ['Required.'] });
    if (file.size > INTAKE_BODY_LIMIT) throw new PayloadTooLargeError(INTAKE_BODY_LIMIT);
    const bytes = new Uint8Array(await file.arrayBuffer());
    const mappingPart = form.get('mapping');
    return {
      csv: bytes,
      fileName: file.name || null,
      contentHash: contentHashOf(bytes),
      mapping: parseMapping(typeof mappingPart === 'string' ? mappingPart : queryMapping),
      reason: parseReason(form.get('reason')) ?? queryReason,
      duplicatePolicy: parsePolicy(form.get('duplicatePolicy')) ?? queryPolicy,
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
    return {
      points: pushedObservationsSchema.parse(parsed),
      fileName: null,
      contentHash: contentHashOf(text),
      mapping: {},
      reason: queryReason,
      duplicatePolicy: queryPolicy,
    };
  }
  throw new UnsupportedMediaTypeError(options.allowJson ? 'text/csv, multipart/form-data or application/json' : 'text/csv or multipart/form-data');
}
