/**
 * Seeded pseudo-random numbers, so every permutation test and every simulation is reproducible
 * from its seed. Generator: xoshiro128** (Blackman & Vigna 2018), state seeded by splitmix32.
 */
export class Random {
  private s0: number;
  private s1: number;
  private s2: number;
  private s3: number;
  private spareNormal: number | null = null;

  constructor(seed: number) {
    if (!Number.isFinite(seed)) throw new Error(`invalid seed: ${seed}`);
    let x = (Math.trunc(seed) ^ 0x9e3779b9) >>> 0;
    const next = (): number => {
      // splitmix32 step (common practice for seeding xoshiro state)
      x = (x + 0x9e3779b9) >>> 0;
      let z = x;
      z = Math.imul(z ^ (z >>> 16), 0x85ebca6b) >>> 0;
      z = Math.imul(z ^ (z >>> 13), 0xc2b2ae35) >>> 0;
      return (z ^ (z >>> 16)) >>> 0;
    };
    this.s0 = next();
    this.s1 = next();
    this.s2 = next();
    this.s3 = next();
  }

  /** Next unsigned 32-bit integer. */
  nextUint32(): number {
    // xoshiro128**: result = rotl(s1 * 5, 7) * 9
    const result = Math.imul(rotl(Math.imul(this.s1, 5), 7), 9) >>> 0;
    const t = this.s1 << 9;
    this.s2 ^= this.s0;
    this.s3 ^= this.s1;
    this.s1 ^= this.s2;
    this.s0 ^= this.s3;
    this.s2 ^= t;
    this.s3 = rotl(this.s3, 11);
    return result;
  }

  /** Uniform in [0, 1) with 53 random bits. */
  uniform(): number {
    const hi = this.nextUint32() >>> 5; // 27 bits
    const lo = this.nextUint32() >>> 6; // 26 bits
    return (hi * 67108864 + lo) / 9007199254740992;
  }

  /** Uniform integer in [0, n), without modulo bias (rejection sampling). */
  int(n: number): number {
    if (!(n >= 1) || n > 0x100000000 || !Number.isInteger(n)) throw new Error(`invalid range: ${n}`);
    const limit = 0x100000000 - (0x100000000 % n);
    let r = this.nextUint32();
    while (r >= limit) r = this.nextUint32();
    return r % n;
  }

  /** Standard normal deviate (Marsaglia polar method, Marsaglia & Bray 1964). */
  normal(): number {
    if (this.spareNormal !== null) {
      const v = this.spareNormal;
      this.spareNormal = null;
      return v;
    }
    let u: number;
    let v: number;
    let s: number;
    do {
      u = 2 * this.uniform() - 1;
      v = 2 * this.uniform() - 1;
      s = u * u + v * v;
    } while (s >= 1 || s === 0);
    const m = Math.sqrt((-2 * Math.log(s)) / s);
    this.spareNormal = v * m;
    return u * m;
  }

  /** Fisher–Yates shuffle in place (Knuth, TAOCP vol. 2, Algorithm P). */
  shuffle<T extends { length: number; [i: number]: unknown }>(a: T): T {
    for (let i = a.length - 1; i > 0; i--) {
      const j = this.int(i + 1);
      const tmp = a[i];
      a[i] = a[j];
      a[j] = tmp;
    }
    return a;
  }
}

function rotl(x: number, k: number): number {
  return ((x << k) | (x >>> (32 - k))) >>> 0;
}
