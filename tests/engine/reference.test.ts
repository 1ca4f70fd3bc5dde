import { readFileSync } from 'node:fs';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import { gaussianSmooth, movingAverage } from '@/lib/engine/detrend';
import { dft } from '@/lib/engine/fft';
import { indicatorTrends, kendallTau } from '@/lib/engine/kendall';
import { erfc } from '@/lib/engine/normal';
import { rollingIndicators } from '@/lib/engine/rolling';
import { DEFAULT_INDICATORS } from '@/lib/engine/indicators';

// Source: numpy/scipy reference values written by tests/reference/make_engine_fixtures.py (versions
// recorded in the JSON): direct O(n²) Nadaraya–Watson sums, two-pass moments per window,
// scipy.stats.kendalltau(method='asymptotic'), scipy.special.erfc, numpy.fft.fft.
const ref = JSON.parse(readFileSync(path.resolve(__dirname, '../../fixtures/reference/engine_reference.json'), 'utf8'));
const x = Float64Array.from(ref.series.x as number[]);
/** The indicators tests/reference/make_engine_fixtures.py covers: the default set, all computed from window moments. */
const MOMENT_NAMES = DEFAULT_INDICATORS;
const n = x.length;

/** max_i |a_i − b_i| / max(|b_i|, floor): relative error, with `floor` for entries near zero. */
function relErr(a: ArrayLike<number>, b: ArrayLike<number | null>, floor = 0): number {
  let worst = 0;
  for (let i = 0; i < b.length; i++) {
    const r = b[i];
    if (r === null) {
      if (Number.isFinite(a[i])) return Infinity;
      continue;
    }
    worst = Math.max(worst, Math.abs(a[i] - r) / Math.max(Math.abs(r), floor));
  }
  return worst;
}

describe('reference fixtures (numpy/scipy)', () => {
  it('records the library versions it came from', () => {
    expect(ref.versions.numpy).toMatch(/^\d+\./);
    expect(ref.versions.scipy).toMatch(/^\d+\./);
  });

  for (const bw of Object.keys(ref.smoother)) {
    it(`Gaussian Nadaraya–Watson smoother equals the direct sum at bandwidth ${bw}`, () => {
      expect(relErr(gaussianSmooth(x, Number(bw) * n), ref.smoother[bw])).toBeLessThan(1e-9);
    });
  }

  it('centred moving average (cut at the ends) equals direct window means', () => {
    expect(relErr(movingAverage(x, ref.moving_average.width), ref.moving_average.trend)).toBeLessThan(1e-12);
  });

  const residual = Float64Array.from(x, (v, i) => v - ref.smoother[String(ref.residual_bandwidth)][i]);
  /** One window's reference block as tests/reference/make_engine_fixtures.py writes it. */
  interface RollingBlock {
    w: number;
    indicators: Record<string, (number | null)[]>;
    kendall: Record<string, { tau: number; p: number } | null>;
  }
  for (const [window, block] of Object.entries(ref.rolling as Record<string, RollingBlock>)) {
    it(`rolling indicators and their Kendall tau at window ${window} (w = ${block.w}) equal two-pass values and scipy`, () => {
      // The moment indicators; the per-window ones are checked against their own fixture in indicators.test.ts.
      expect(Object.keys(block.indicators).sort()).toEqual([...MOMENT_NAMES].sort());
      const ind = rollingIndicators(residual, block.w, MOMENT_NAMES, { raw: x, dt: ref.series.dt });
      const trends = indicatorTrends(ind);
      for (const name of MOMENT_NAMES) {
        // skewness crosses zero; its scale is that of the series' skewness values
        expect(relErr(ind[name], block.indicators[name], name === 'skewness' ? 0.1 : 0), name).toBeLessThan(1e-9);
        const k = block.kendall[name];
        if (k === null) {
          expect(Number.isNaN(trends[name]!.tau), name).toBe(true);
          continue;
        }
        expect(Math.abs(trends[name]!.tau - k.tau), `${name} tau`).toBeLessThan(1e-12);
        expect(Math.abs(trends[name]!.p - k.p) / k.p, `${name} p`).toBeLessThan(1e-9);
      }
    });
  }

  it('keeps every digit of small variations on a 1e7 offset (NumAcc-style) through the sliding sums', () => {
    const off = Float64Array.from(ref.offset.x as number[]);
    const ind = rollingIndicators(off, ref.offset.w, MOMENT_NAMES, { raw: off, dt: 1 });
    for (const name of ['variance', 'sd', 'cv', 'ac1', 'kurtosis'] as const) {
      expect(relErr(ind[name], ref.offset.indicators[name]), name).toBeLessThan(1e-9);
    }
    expect(relErr(ind.skewness, ref.offset.indicators.skewness, 0.1)).toBeLessThan(1e-9);
  });

  it('Kendall tau-b with ties in y, and in both variables, equals scipy (tau and asymptotic p)', () => {
    const { y, x: xt, index, both } = ref.kendall_ties;
    const a = kendallTau(null, Float64Array.from(y));
    expect(Math.abs(a.tau - index.tau)).toBeLessThan(1e-12);
    expect(Math.abs(a.p - index.p) / index.p).toBeLessThan(1e-9);
    const b = kendallTau(Float64Array.from(xt), Float64Array.from(y));
    expect(Math.abs(b.tau - both.tau)).toBeLessThan(1e-12);
    expect(Math.abs(b.p - both.p) / both.p).toBeLessThan(1e-9);
  });

  it('erfc matches scipy.special.erfc to 1e-13 relative', () => {
    ref.erfc.x.forEach((z: number, i: number) => {
      const want = ref.erfc.erfc[i];
      expect(Math.abs(erfc(z) - want) / want, `erfc(${z})`).toBeLessThan(1e-13);
    });
  });

  for (const m of Object.keys(ref.fft)) {
    it(`DFT of length ${m} equals numpy.fft.fft`, () => {
      const f = ref.fft[m];
      const out = dft(Float64Array.from(f.re), Float64Array.from(f.im));
      const scale = Math.max(...f.fre.map(Math.abs));
      expect(relErr(out.re, f.fre, scale)).toBeLessThan(1e-12);
      expect(relErr(out.im, f.fim, scale)).toBeLessThan(1e-12);
    });
  }
});
