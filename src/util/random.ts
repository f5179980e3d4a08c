/**
 * Seeded pseudo-random numbers: xoshiro128** 1.1 (D. Blackman and S. Vigna,
 * https://prng.di.unimi.it/xoshiro128starstar.c), its 128-bit state filled by SplitMix32.
 * Pure 32-bit integer arithmetic, so the same seed gives the same sequence on every machine.
 * No Math.random anywhere in the product: every plan is reproducible from its seed.
 */
export class Random {
  private s0: number;
  private s1: number;
  private s2: number;
  private s3: number;

  /**
   * @param seed any safe integer (its low and high 32 bits are both used)
   * @param stream a second integer that selects an independent sequence for the same seed
   */
  constructor(seed: number, stream = 0) {
    if (!Number.isSafeInteger(seed)) throw new RangeError(`seed must be a safe integer, got ${seed}`);
    const lo = seed >>> 0;
    const hi = Math.floor(seed / 2 ** 32) >>> 0;
    let x = (lo ^ Math.imul(hi, 0x85ebca6b) ^ Math.imul(stream >>> 0, 0xc2b2ae35)) >>> 0;
    const next = (): number => {
      x = (x + 0x9e3779b9) >>> 0;
      let t = x ^ (x >>> 16);
      t = Math.imul(t, 0x21f0aaad);
      t ^= t >>> 15;
      t = Math.imul(t, 0x735a2d97);
      return (t ^ (t >>> 15)) >>> 0;
    };
    this.s0 = next();
    this.s1 = next();
    this.s2 = next();
    this.s3 = next();
    if ((this.s0 | this.s1 | this.s2 | this.s3) === 0) this.s0 = 1;
  }

  /** Next unsigned 32-bit integer. */
  nextUint32(): number {
    const s1 = this.s1;
    const result = Math.imul(rotl(Math.imul(s1, 5), 7), 9) >>> 0;
    const t = s1 << 9;
    this.s2 ^= this.s0;
    this.s3 ^= this.s1;
    this.s1 ^= this.s2;
    this.s0 ^= this.s3;
    this.s2 ^= t;
    this.s3 = rotl(this.s3, 11);
    return result;
  }

  /** Uniform double in [0, 1) with 53 random bits. */
  next(): number {
    const a = this.nextUint32() >>> 5; // 27 bits
    const b = this.nextUint32() >>> 6; // 26 bits
    return (a * 67108864 + b) / 9007199254740992;
  }

  /** Uniform integer in [0, n) for 0 < n <= 2^32, without modulo bias. */
  nextInt(n: number): number {
    if (!(n > 0 && n <= 2 ** 32 && Number.isInteger(n))) throw new RangeError(`nextInt needs an integer in 1..2^32, got ${n}`);
    const limit = 2 ** 32 - (2 ** 32 % n);
    for (;;) {
      const r = this.nextUint32();
      if (r < limit) return r % n;
    }
  }
}

function rotl(x: number, k: number): number {
  return (x << k) | (x >>> (32 - k));
}
