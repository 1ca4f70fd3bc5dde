/**
 * Discrete Fourier transforms on split real/imaginary Float64Arrays.
 * Twiddle factors are evaluated directly (no recurrences) so rounding does not grow with length.
 */

interface Twiddles {
  cos: Float64Array;
  sin: Float64Array;
}

// One contiguous table per length: reading a longer table with a stride doubles the FFT's time.
const twiddleCache = new Map<number, Twiddles>();

/** cos/sin(2πk/n) for k < n/2; derived by striding a cached longer table (same values) or computed. */
function twiddles(n: number): Twiddles {
  const hit = twiddleCache.get(n);
  if (hit) return hit;
  const half = Math.max(n >> 1, 1);
  const cos = new Float64Array(half);
  const sin = new Float64Array(half);
  const longer = [...twiddleCache.keys()].find((m) => m > n && m % n === 0);
  if (longer !== undefined) {
    const src = twiddleCache.get(longer)!;
    const stride = longer / n;
    for (let k = 0; k < half; k++) {
      cos[k] = src.cos[k * stride];
      sin[k] = src.sin[k * stride];
    }
  } else {
    const quarter = n >> 2;
    const eighth = n >> 3;
    const direct = eighth === 0 ? half - 1 : eighth;
    for (let k = 0; k <= direct; k++) {
      const a = (2 * Math.PI * k) / n;
      cos[k] = Math.cos(a);
      sin[k] = Math.sin(a);
    }
    if (eighth > 0) {
      // Exact symmetries of the circle: cos(π/2 − a) = sin a, and cos(a + π/2) = −sin a.
      for (let k = eighth + 1; k <= quarter; k++) {
        cos[k] = sin[quarter - k];
        sin[k] = cos[quarter - k];
      }
      for (let k = quarter + 1; k < half; k++) {
        cos[k] = -sin[k - quarter];
        sin[k] = cos[k - quarter];
      }
    }
  }
  if (twiddleCache.size >= 8) twiddleCache.delete(twiddleCache.keys().next().value!);
  const t = { cos, sin };
  twiddleCache.set(n, t);
  return t;
}

/** True when n is a power of two (n ≥ 1): n & (n − 1) = 0. O(1). */
function isPowerOfTwo(n: number): boolean {
  return n >= 1 && (n & (n - 1)) === 0;
}

/** Smallest power of two ≥ n, by doubling. O(log n). */
export function nextPowerOfTwo(n: number): number {
  let p = 1;
  while (p < n) p *= 2;
  return p;
}

/**
 * In-place iterative radix-2 Cooley–Tukey FFT (stages fused in pairs), X_k = Σ_j x_j e^{∓2πi jk/N} (inverse divides by N).
 * Length must be a power of two. Cost O(N log N). Source: Cooley & Tukey (1965), Math. Comp. 19, 297–301;
 * Press et al., Numerical Recipes (3rd ed., 2007), Sec. 12.2.
 */
function fftPow2(re: Float64Array, im: Float64Array, inverse = false): void {
  const n = re.length;
  if (!isPowerOfTwo(n)) throw new RangeError(`FFT length ${n} is not a power of two`);
  for (let i = 1, j = 0; i < n; i++) {
    let bit = n >> 1;
    for (; j & bit; bit >>= 1) j ^= bit;
    j ^= bit;
    if (i < j) {
      const tr = re[i];
      re[i] = re[j];
      re[j] = tr;
      const ti = im[i];
      im[i] = im[j];
      im[j] = ti;
    }
  }
  const { cos, sin } = twiddles(n);
  const sign = inverse ? 1 : -1;
  let done = 1;
  if (Math.log2(n) % 2 === 1) {
    for (let a = 0; a < n; a += 2) {
      const br = re[a + 1],
        bi = im[a + 1];
      re[a + 1] = re[a] - br;
      im[a + 1] = im[a] - bi;
      re[a] += br;
      im[a] += bi;
    }
    done = 2;
  }
  // Two radix-2 stages (sub-transform sizes 2q and 4q) fused per pass: the same butterflies, half the
  // passes over memory; the factor w_{4q}^q = ∓i is applied exactly.
  for (; done < n; done *= 4) {
    const q = done;
    const s1 = n / (2 * q);
    const s2 = n / (4 * q);
    for (let start = 0; start < n; start += 4 * q) {
      for (let k = 0; k < q; k++) {
        const w1r = cos[k * s1],
          w1i = sign * sin[k * s1];
        const w2r = cos[k * s2],
          w2i = sign * sin[k * s2];
        const a0 = start + k,
          a1 = a0 + q,
          a2 = a1 + q,
          a3 = a2 + q;
        const x1r = re[a1],
          x1i = im[a1],
          x3r = re[a3],
          x3i = im[a3];
        const t1r = x1r * w1r - x1i * w1i,
          t1i = x1r * w1i + x1i * w1r;
        const t3r = x3r * w1r - x3i * w1i,
          t3i = x3r * w1i + x3i * w1r;
        const y0r = re[a0] + t1r,
          y0i = im[a0] + t1i;
        const y1r = re[a0] - t1r,
          y1i = im[a0] - t1i;
        const y2r = re[a2] + t3r,
          y2i = im[a2] + t3i;
        const y3r = re[a2] - t3r,
          y3i = im[a2] - t3i;
        const ur = y2r * w2r - y2i * w2i,
          ui = y2r * w2i + y2i * w2r;
        const pr = y3r * w2r - y3i * w2i,
          pi = y3r * w2i + y3i * w2r;
        const vr = -sign * pi,
          vi = sign * pr;
        re[a0] = y0r + ur;
        im[a0] = y0i + ui;
        re[a2] = y0r - ur;
        im[a2] = y0i - ui;
        re[a1] = y1r + vr;
        im[a1] = y1i + vi;
        re[a3] = y1r - vr;
        im[a3] = y1i - vi;
      }
    }
  }
  if (inverse) {
    const s = 1 / n;
    for (let i = 0; i < n; i++) {
      re[i] *= s;
      im[i] *= s;
    }
  }
}

/**
 * Spectrum X_k, k = 0..N/2, of a real sequence x of power-of-two length N (zero-padded from x.length),
 * from one complex FFT of length N/2 on z_j = x_{2j} + i x_{2j+1}:
 * X_k = (Z_k + Z*_{N/2−k})/2 − i e^{−2πik/N} (Z_k − Z*_{N/2−k})/2. Cost O(N log N), half a complex FFT.
 * Source: Press et al., Numerical Recipes (3rd ed., 2007), Sec. 12.3.
 */
export function realFft(x: Float64Array, size: number): { re: Float64Array; im: Float64Array } {
  const h = size >> 1;
  const { cos, sin } = twiddles(size);
  const zr = new Float64Array(h);
  const zi = new Float64Array(h);
  const len = Math.min(x.length, size);
  for (let j = 0; 2 * j < len; j++) {
    zr[j] = x[2 * j];
    if (2 * j + 1 < len) zi[j] = x[2 * j + 1];
  }
  fftPow2(zr, zi);
  return unpackHalfSpectrum(zr, zi, { cos, sin });
}

/**
 * The half spectrum X_k, k = 0..h, of a real sequence of length 2h from the DFT Z of z_j = x_{2j} + i x_{2j+1}:
 * X_k = (Z_k + Z*_{h−k})/2 − i e^{−2πik/2h} (Z_k − Z*_{h−k})/2, with cos/sin(2πk/2h) given. O(h).
 * Source: Press et al., Numerical Recipes (3rd ed., 2007), Sec. 12.3.
 */
function unpackHalfSpectrum(zr: Float64Array, zi: Float64Array, { cos, sin }: Twiddles): { re: Float64Array; im: Float64Array } {
  const h = zr.length;
  const re = new Float64Array(h + 1);
  const im = new Float64Array(h + 1);
  re[0] = zr[0] + zi[0];
  re[h] = zr[0] - zi[0];
  for (let k = 1; k < h; k++) {
    const ar = zr[k],
      ai = zi[k],
      br = zr[h - k],
      bi = -zi[h - k];
    const er = (ar + br) / 2,
      ei = (ai + bi) / 2;
    const dr = (ar - br) / 2,
      di = (ai - bi) / 2;
    const wr = cos[k],
      wi = -sin[k];
    // −i·w·d
    const tr = wr * dr - wi * di,
      ti = wr * di + wi * dr;
    re[k] = er + ti;
    im[k] = ei - tr;
  }
  return { re, im };
}

/**
 * Inverse of realFft: the real sequence of length N whose half spectrum (k = 0..N/2) is given, via one
 * complex inverse FFT of length N/2. Cost O(N log N). Source: Press et al. (2007), Sec. 12.3.
 */
export function inverseRealFft(re: Float64Array, im: Float64Array, size: number): Float64Array {
  const h = size >> 1;
  const zr = new Float64Array(h);
  const zi = new Float64Array(h);
  const { cos, sin } = twiddles(size);
  for (let k = 0; k < h; k++) {
    const ar = re[k],
      ai = im[k],
      br = re[h - k],
      bi = -im[h - k];
    const er = (ar + br) / 2,
      ei = (ai + bi) / 2;
    const dr = (ar - br) / 2,
      di = (ai - bi) / 2;
    const wr = cos[k],
      wi = sin[k];
    // odd part O = d·e^{+2πik/N}; Z = E + i·O
    const or = dr * wr - di * wi,
      oi = dr * wi + di * wr;
    zr[k] = er - oi;
    zi[k] = ei + or;
  }
  fftPow2(zr, zi, true);
  const out = new Float64Array(size);
  for (let j = 0; j < h; j++) {
    out[2 * j] = zr[j];
    out[2 * j + 1] = zi[j];
  }
  return out;
}

interface Chirp {
  m: number;
  cr: Float64Array;
  ci: Float64Array;
  br: Float64Array;
  bi: Float64Array;
}

const chirpCache = new Map<number, Chirp>();

function chirp(n: number): Chirp {
  let c = chirpCache.get(n);
  if (c) return c;
  const m = nextPowerOfTwo(2 * n - 1);
  const cr = new Float64Array(n);
  const ci = new Float64Array(n);
  const twoN = 2 * n;
  for (let k = 0; k < n; k++) {
    // k² mod 2n is exact in doubles for k < 9.4e7 and keeps the angle small, so it stays accurate.
    const a = (Math.PI * ((k * k) % twoN)) / n;
    cr[k] = Math.cos(a);
    ci[k] = -Math.sin(a);
  }
  const br = new Float64Array(m);
  const bi = new Float64Array(m);
  br[0] = cr[0];
  bi[0] = -ci[0];
  for (let k = 1; k < n; k++) {
    br[k] = br[m - k] = cr[k];
    bi[k] = bi[m - k] = -ci[k];
  }
  fftPow2(br, bi);
  c = { m, cr, ci, br, bi };
  if (chirpCache.size > 8) chirpCache.clear();
  chirpCache.set(n, c);
  return c;
}

/**
 * DFT of any length, X_k = Σ_j x_j e^{∓2πi jk/n} (inverse divides by n), returned as new arrays.
 * Power-of-two lengths use fftPow2; other lengths Bluestein's chirp-z identity
 * jk = (j² + k² − (k−j)²)/2, which turns the DFT into a convolution done with power-of-two FFTs.
 * Cost O(n log n). Source: Bluestein (1970), IEEE Trans. Audio Electroacoust. 18, 451–455.
 */
export function dft(re: Float64Array, im: Float64Array, inverse = false): { re: Float64Array; im: Float64Array } {
  const n = re.length;
  if (isPowerOfTwo(n)) {
    const r = Float64Array.from(re);
    const i = Float64Array.from(im);
    fftPow2(r, i, inverse);
    return { re: r, im: i };
  }
  const { m, cr, ci, br, bi } = chirp(n);
  const s = inverse ? -1 : 1;
  const ar = new Float64Array(m);
  const ai = new Float64Array(m);
  // Inverse via conjugation: IDFT(x) = conj(DFT(conj x))/n.
  for (let k = 0; k < n; k++) {
    const xr = re[k];
    const xi = s * im[k];
    ar[k] = xr * cr[k] - xi * ci[k];
    ai[k] = xr * ci[k] + xi * cr[k];
  }
  fftPow2(ar, ai);
  for (let k = 0; k < m; k++) {
    const xr = ar[k];
    const xi = ai[k];
    ar[k] = xr * br[k] - xi * bi[k];
    ai[k] = xr * bi[k] + xi * br[k];
  }
  fftPow2(ar, ai, true);
  const outR = new Float64Array(n);
  const outI = new Float64Array(n);
  const scale = inverse ? 1 / n : 1;
  for (let k = 0; k < n; k++) {
    const xr = ar[k];
    const xi = ai[k];
    outR[k] = (xr * cr[k] - xi * ci[k]) * scale;
    outI[k] = s * (xr * ci[k] + xi * cr[k]) * scale;
  }
  return { re: outR, im: outI };
}

const unpackingCache = new Map<number, Twiddles>();

/** cos/sin(2πk/n) for k < n/2, evaluated directly (no recurrence), kept for the last few lengths: a rolling indicator asks for one length many times. */
function unpackingTwiddles(n: number): Twiddles {
  const hit = unpackingCache.get(n);
  if (hit) return hit;
  const half = n >> 1;
  const t = { cos: new Float64Array(half), sin: new Float64Array(half) };
  for (let k = 0; k < half; k++) {
    const a = (2 * Math.PI * k) / n;
    t.cos[k] = Math.cos(a);
    t.sin[k] = Math.sin(a);
  }
  if (unpackingCache.size >= 4) unpackingCache.delete(unpackingCache.keys().next().value!);
  unpackingCache.set(n, t);
  return t;
}

/**
 * Spectrum X_k, k = 0..⌊n/2⌋, of a real sequence x of any length n. Even n: one complex DFT (dft) of length n/2 on
 * z_j = x_{2j} + i x_{2j+1}, unpacked by unpackHalfSpectrum, half the work of a complex DFT of length n; odd n: the
 * complex DFT itself. Cost O(n log n).
 * Source: Press et al., Numerical Recipes (3rd ed., 2007), Sec. 12.3.
 */
export function realDft(x: Float64Array): { re: Float64Array; im: Float64Array } {
  const n = x.length;
  const half = n >> 1;
  if (n % 2 === 1 || n < 4) {
    const full = dft(x, new Float64Array(n));
    return { re: full.re.subarray(0, half + 1), im: full.im.subarray(0, half + 1) };
  }
  if (isPowerOfTwo(n)) return realFft(x, n);
  const zr = new Float64Array(half);
  const zi = new Float64Array(half);
  for (let j = 0; j < half; j++) {
    zr[j] = x[2 * j];
    zi[j] = x[2 * j + 1];
  }
  const z = dft(zr, zi);
  return unpackHalfSpectrum(z.re, z.im, unpackingTwiddles(n));
}
