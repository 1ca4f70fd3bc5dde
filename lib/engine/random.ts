/**
 * Seeded pseudo-random numbers. Every surrogate draws from its own stream derived from
 * (seed, stream index), so results do not depend on how surrogates are spread over threads.
 */

/**
 * 32-bit mixing function: golden-ratio increment followed by the MurmurHash3 fmix32 finaliser.
 * Cost O(1). Source: Appleby, MurmurHash3 (public domain), fmix32; Steele, Lea & Flood (2014),
 * "Fast splittable pseudorandom number generators", OOPSLA (SplitMix increment 0x9e3779b9).
 */
function mix32(z: number): number {
  z = (z + 0x9e3779b9) | 0;
  z = Math.imul(z ^ (z >>> 16), 0x85ebca6b);
  z = Math.imul(z ^ (z >>> 13), 0xc2b2ae35);
  return (z ^ (z >>> 16)) >>> 0;
}

/**
 * xoshiro128** generator: state s0..s3, output rotl(s1·5, 7)·9, then the xorshift state update.
 * Cost O(1) per draw; period 2^128 − 1. Source: Blackman & Vigna (2021), "Scrambled linear
 * pseudorandom number generators", ACM Trans. Math. Softw. 47(4), 36.
 */
export class RandomStream {
  private s0: number;
  private s1: number;
  private s2: number;
  private s3: number;
  private spare = Number.NaN;

  /** Stream `stream` of seed `seed` (any finite integers; the seed's upper 32 bits are mixed in too). */
  constructor(seed: number, stream = 0) {
    const lo = seed >>> 0;
    const hi = Math.floor(seed / 4294967296) >>> 0;
    let z = mix32(lo ^ mix32(hi ^ mix32((stream >>> 0) ^ mix32(Math.floor(stream / 4294967296) >>> 0))));
    this.s0 = z = mix32(z);
    this.s1 = z = mix32(z);
    this.s2 = z = mix32(z);
    this.s3 = mix32(z);
    if ((this.s0 | this.s1 | this.s2 | this.s3) === 0) this.s0 = 1;
  }

  /** Next 32-bit unsigned integer. */
  nextUint32(): number {
    const s1 = this.s1;
    const m = Math.imul(s1, 5);
    const result = Math.imul((m << 7) | (m >>> 25), 9) >>> 0;
    const t = s1 << 9;
    this.s2 ^= this.s0;
    this.s3 ^= this.s1;
    this.s1 ^= this.s2;
    this.s0 ^= this.s3;
    this.s2 ^= t;
    this.s3 = (this.s3 << 11) | (this.s3 >>> 21);
    return result;
  }

  /** Uniform double in [0, 1) with 53 random bits: (a·2^26 + b)/2^53 from two draws. O(1). */
  uniform(): number {
    const a = this.nextUint32() >>> 5;
    const b = this.nextUint32() >>> 6;
    return (a * 67108864 + b) / 9007199254740992;
  }

  /**
   * Standard normal deviate by the Box–Muller transform, z = √(−2 ln u1)·cos(2π u2) (and the sine
   * partner on the next call). O(1). Source: Box & Muller (1958), Ann. Math. Statist. 29, 610–611.
   */
  normal(): number {
    if (!Number.isNaN(this.spare)) {
      const z = this.spare;
      this.spare = Number.NaN;
      return z;
    }
    const u1 = 1 - this.uniform();
    const u2 = this.uniform();
    const r = Math.sqrt(-2 * Math.log(u1));
    const theta = 2 * Math.PI * u2;
    this.spare = r * Math.sin(theta);
    return r * Math.cos(theta);
  }
}
