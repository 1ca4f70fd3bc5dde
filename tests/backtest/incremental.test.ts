import { describe, expect, it } from 'vitest';
import { IncrementalKendall, SlidingMoments, denseRanks } from '@/lib/engine/incremental';
import { indicatorTrend } from '@/lib/engine/kendall';
import { RandomStream } from '@/lib/engine/random';
import { rollingIndicators } from '@/lib/engine/rolling';
import { INDICATOR_NAMES } from '@/lib/engine/settings';

function ar1(n: number, phi: number, offset: number, seed: number): Float64Array {
  const rng = new RandomStream(seed);
  const x = new Float64Array(n);
  let v = 0;
  for (let i = 0; i < n; i++) {
    v = phi * v + rng.normal();
    x[i] = offset + v;
  }
  return x;
}

/** |a − b| ≤ 1e-9·max(1, |b|): the agreement the issue asks of incremental against full recomputation. */
function close(a: number, b: number): boolean {
  if (Number.isNaN(b)) return Number.isNaN(a);
  return Math.abs(a - b) <= 1e-9 * Math.max(1, Math.abs(b));
}

describe('SlidingMoments against rollingIndicators (full recomputation)', () => {
  it.each([
    ['AR(1) about 0', ar1(3000, 0.7, 0, 1), 101],
    ['AR(1) about 1e7 (NIST NumAcc-like offset)', ar1(3000, 0.9, 1e7, 2), 64],
    ['short window', ar1(500, 0.3, 5, 3), 8],
  ] as const)('%s agrees to 1e-9 for every indicator and window', (_name, x, w) => {
    const dt = 0.5;
    const full = rollingIndicators(x, w, INDICATOR_NAMES, { raw: x, dt });
    const acc = new SlidingMoments(w);
    let worst = 0;
    for (let i = 0; i < x.length; i++) {
      acc.push(x[i]);
      if (!acc.full) continue;
      for (const name of INDICATOR_NAMES) {
        const v = acc.indicator(name, { dt });
        const ref = full[name][i];
        if (!close(v, ref)) throw new Error(`${name} at ${i}: ${v} vs ${ref}`);
        if (Number.isFinite(ref)) worst = Math.max(worst, Math.abs(v - ref) / Math.max(1, Math.abs(ref)));
      }
    }
    expect(worst).toBeLessThanOrEqual(1e-9);
  });

  it('holds a partial window while filling (mean of what has arrived)', () => {
    const acc = new SlidingMoments(5);
    [1, 2, 3].forEach((v) => acc.push(v));
    expect(acc.count).toBe(3);
    expect(acc.mean()).toBe(2);
    // sample variance of 1, 2, 3 is 1 (denominator k − 1)
    expect(acc.indicator('variance', { dt: 1 })).toBeCloseTo(1, 14);
  });
});

describe('IncrementalKendall against kendallTau on the whole set', () => {
  it('appending matches indicatorTrend at every prefix, with ties', () => {
    const rng = new RandomStream(9);
    // rounded values give many ties, the hard case for tau-b and Var(S)
    const y = Float64Array.from({ length: 400 }, (_, i) => Math.round(10 * rng.normal() + i / 40));
    const { ranks, size } = denseRanks(y);
    const k = new IncrementalKendall(size, y.length);
    for (let i = 0; i < y.length; i++) {
      k.push(ranks[i]);
      if (i < 2) continue;
      const ref = indicatorTrend(y.subarray(0, i + 1));
      const got = k.result();
      expect(got.s).toBe(ref.s);
      expect(Math.abs(got.tau - ref.tau)).toBeLessThanOrEqual(1e-12);
      expect(Math.abs(got.p - ref.p)).toBeLessThanOrEqual(1e-12);
    }
  });

  it('a sliding set (drop oldest) matches recomputation on the window', () => {
    const rng = new RandomStream(10);
    const y = Float64Array.from({ length: 600 }, () => rng.normal());
    const { ranks, size } = denseRanks(y);
    const span = 150;
    const k = new IncrementalKendall(size, span);
    for (let i = 0; i < y.length; i++) {
      if (k.length === span) k.shift();
      k.push(ranks[i]);
      if (i % 37 !== 0 || i < 3) continue;
      const ref = indicatorTrend(y.subarray(Math.max(0, i + 1 - span), i + 1));
      expect(k.result().s).toBe(ref.s);
      expect(Math.abs(k.result().tau - ref.tau)).toBeLessThanOrEqual(1e-12);
    }
  });
});
