import { describe, expect, it } from 'vitest';
import { runAnalysis } from '@/lib/engine/analyze';
import { dft } from '@/lib/engine/fft';
import { RandomStream } from '@/lib/engine/random';
import { analysisSettingsSchema } from '@/lib/engine/settings';
import { computeSurrogateTaus } from '@/lib/engine/surrogate-pool';
import { makeSurrogate, prepareSurrogateJob } from '@/lib/engine/surrogates';

function series(n: number, seed: number): { time: Float64Array; value: Float64Array } {
  const rng = new RandomStream(seed, 0);
  const value = new Float64Array(n);
  let x = 0;
  for (let i = 0; i < n; i++) {
    x = (0.3 + (0.5 * i) / n) * x + rng.normal();
    value[i] = 5 + Math.sin(i / 40) + x;
  }
  return { time: Float64Array.from({ length: n }, (_, i) => i), value };
}

const bytes = (a: number[]) => Buffer.from(Float64Array.from(a).buffer);

describe('surrogate determinism (common practice: reproducible seeded Monte Carlo)', () => {
  const { time, value } = series(400, 3);
  for (const method of ['ar1', 'phase'] as const) {
    it(`${method}: same seed ⇒ byte-identical taus, in worker threads and synchronously`, async () => {
      const settings = analysisSettingsSchema.parse({ surrogates: 120, surrogateMethod: method, seed: 99 });
      const a = await runAnalysis({ time, value, timeKind: 'numeric' }, settings, { parallel: true });
      const b = await runAnalysis({ time, value, timeKind: 'numeric' }, settings, { parallel: false });
      const c = await runAnalysis({ time, value, timeKind: 'numeric' }, { ...settings, seed: 100 }, { parallel: false });
      for (const name of settings.indicators) {
        expect(a.significance[name]!.taus.length).toBeGreaterThan(100);
        expect(bytes(a.significance[name]!.taus).equals(bytes(b.significance[name]!.taus)), name).toBe(true);
        expect(a.significance[name]!.p).toBe(b.significance[name]!.p);
        expect(bytes(a.significance[name]!.taus).equals(bytes(c.significance[name]!.taus)), name).toBe(false);
      }
    });
  }

  it('really runs the parallel path in worker threads, with the same numbers as one thread', async () => {
    const job = prepareSurrogateJob(value, value, { method: 'ar1', seed: 5, w: 200, dt: 1, indicators: ['variance', 'ac1'] });
    const par = await computeSurrogateTaus(job, 100, { parallel: true, threads: 2 });
    const seq = await computeSurrogateTaus(job, 100, { parallel: false });
    expect(par.workers).toBe(2);
    expect(seq.workers).toBe(0);
    expect(Buffer.from(par.taus.ac1.buffer).equals(Buffer.from(seq.taus.ac1.buffer))).toBe(true);
  });

  it('a surrogate depends only on (seed, index), not on which others were drawn', () => {
    const job = prepareSurrogateJob(value, value, { method: 'ar1', seed: 5, w: 200, dt: 1, indicators: ['ac1'] });
    const late = makeSurrogate(job, 37);
    makeSurrogate(job, 3);
    expect(Buffer.from(makeSurrogate(job, 37).buffer).equals(Buffer.from(late.buffer))).toBe(true);
  });

  // Source: Theiler et al. (1992), Physica D 58, 77–94: a phase-randomised surrogate keeps the Fourier
  // amplitudes (hence the periodogram and autocovariance) of the original.
  it('phase-randomised surrogates keep every Fourier amplitude and are real', () => {
    const x = value.subarray(0, 301);
    const job = prepareSurrogateJob(x, x, { method: 'phase', seed: 8, w: 100, dt: 1, indicators: ['ac1'] });
    const s = makeSurrogate(job, 0);
    const a = dft(x, new Float64Array(x.length));
    const b = dft(s, new Float64Array(s.length));
    for (let k = 0; k < x.length; k++) {
      expect(Math.abs(Math.hypot(a.re[k], a.im[k]) - Math.hypot(b.re[k], b.im[k]))).toBeLessThan(1e-9 * Math.abs(a.re[0]));
    }
    expect(s.some((v, i) => Math.abs(v - x[i]) > 1e-3)).toBe(true);
  });

  // Source: AR(1) fit by the lag-1 autocorrelation (Yule–Walker), Box et al. (2015), Ch. 3/7 (from memory):
  // surrogates from the fit reproduce the residual's lag-1 autocorrelation and variance on average.
  it('AR(1) surrogates reproduce the fitted coefficient and variance on average', () => {
    const job = prepareSurrogateJob(value, value, { method: 'ar1', seed: 1, w: 200, dt: 1, indicators: ['ac1'] });
    const { phi, innovationSd } = job.ar1!;
    let acc = 0;
    let v = 0;
    const N = 400;
    for (let i = 0; i < N; i++) {
      const s = makeSurrogate(job, i);
      const m = s.reduce((p, q) => p + q, 0) / s.length;
      let num = 0,
        den = 0;
      for (let t = 0; t < s.length; t++) {
        den += (s[t] - m) ** 2;
        if (t + 1 < s.length) num += (s[t] - m) * (s[t + 1] - m);
      }
      acc += num / den;
      v += den / (s.length - 1);
    }
    expect(Math.abs(acc / N - phi)).toBeLessThan(0.02);
    const stationary = (innovationSd * innovationSd) / (1 - phi * phi);
    expect(Math.abs(v / N / stationary - 1)).toBeLessThan(0.05);
  });
});
