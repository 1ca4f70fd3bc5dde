import { describe, expect, it } from 'vitest';
import { canonicalObservationsCsv } from '@/lib/analysis/provenance';
import { formatInstant } from '@/lib/intake/time-formats';
import { RandomStream } from '@/lib/engine/random';

describe('the canonical observations text', () => {
  it('writes every instant as formatInstant does, ordinary and deep times, whole and fractional milliseconds', () => {
    const rng = new RandomStream(5, 0);
    const times = [0, -1, 1, -62167219200000, -62167219200001, 253402300799999, 253402300800000, -8.64e15, 8.64e15, 8.64e15 + 1, -1e17, 1.5, -0.5];
    for (let i = 0; i < 2000; i++) times.push(Math.round((rng.uniform() - 0.5) * 2e16), Math.round((rng.uniform() - 0.5) * 1e13));
    const value = Float64Array.from(times, (_, i) => i / 7);
    const expected = ['time,value', ...times.map((t, i) => `${formatInstant(t)},${String(value[i])}`)].join('\n') + '\n';
    expect(canonicalObservationsCsv(Float64Array.from(times), value)).toBe(expected);
  });
});
