import type { Transaction } from 'sequelize';
import { SeriesAnalysisState } from '@/models';
import type { AnalysisState } from '@/lib/engine/update';

/**
 * The kept state of an incremental analysis as one binary value: a 4-byte length, a JSON header holding every
 * scalar and, in place of each Float64Array, `{ "$f64": [offset, length] }`, padding to 8 bytes, then the arrays'
 * doubles (little-endian, as typed arrays are on every platform Node runs on). Exact for every double; O(size).
 */
export function packState(state: AnalysisState): Buffer {
  const arrays: Float64Array[] = [];
  let offset = 0;
  const header = JSON.stringify(state, (_key, value: unknown) => {
    if (!(value instanceof Float64Array)) return value;
    arrays.push(value);
    offset += value.length;
    return { $f64: [offset - value.length, value.length] };
  });
  const head = Buffer.from(header, 'utf8');
  const start = Math.ceil((4 + head.length) / 8) * 8;
  const out = Buffer.alloc(start + offset * 8);
  out.writeUInt32LE(head.length, 0);
  head.copy(out, 4);
  let at = start;
  for (const a of arrays) {
    Buffer.from(a.buffer, a.byteOffset, a.byteLength).copy(out, at);
    at += a.byteLength;
  }
  return out;
}

export function unpackState(packed: Buffer): AnalysisState {
  const length = packed.readUInt32LE(0);
  const start = Math.ceil((4 + length) / 8) * 8;
  // A copy, so the doubles sit on an 8-byte boundary whatever the driver's buffer offset.
  const doubles = new Float64Array(new Uint8Array(packed.subarray(start)).buffer);
  return JSON.parse(packed.toString('utf8', 4, 4 + length), (_key, value: unknown) => {
    if (value && typeof value === 'object' && '$f64' in value) {
      const [from, count] = (value as { $f64: [number, number] }).$f64;
      return doubles.slice(from, from + count);
    }
    return value;
  }) as AnalysisState;
}

/** The kept state of a series and the snapshot it belongs to; null when none is kept or it cannot be read. */
export async function loadAnalysisState(seriesId: number): Promise<{ snapshotId: number; state: AnalysisState } | null> {
  const row = await SeriesAnalysisState.findByPk(seriesId);
  if (!row) return null;
  try {
    return { snapshotId: row.snapshotId, state: unpackState(Buffer.from(row.state)) };
  } catch {
    // An unreadable state (a format from another version) only costs a full analysis.
    return null;
  }
}

/** Keeps `state` as the series' state (or drops the kept one when the analysis left none), in the caller's transaction. */
export async function keepAnalysisState(seriesId: number, snapshotId: number, state: AnalysisState | null, transaction: Transaction): Promise<void> {
  if (state === null) {
    await SeriesAnalysisState.destroy({ where: { seriesId }, transaction });
    return;
  }
  await SeriesAnalysisState.upsert({ seriesId, snapshotId, state: packState(state) }, { transaction });
}
