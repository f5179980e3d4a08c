import { describe, expect, it } from 'vitest';
import { Random } from '../../src/util/random.js';

/** Pearson's chi-square statistic of observed counts against expected counts. */
function chiSquare(observed: readonly number[], expected: readonly number[]): number {
  let s = 0;
  for (let i = 0; i < observed.length; i++) s += (observed[i]! - expected[i]!) ** 2 / expected[i]!;
  return s;
}

// Upper-tail critical values of the chi-square distribution at significance 0.001, from the
// table "Critical Values of the Chi-Square Distribution", NIST/SEMATECH e-Handbook of Statistical
// Methods, section 1.3.6.7.4: 1 df 10.828, 9 df 27.877, 15 df 37.697. With fixed seeds each check
// is deterministic; a fair generator would fail one with probability 0.001.
const CHI2_001 = { 1: 10.828, 9: 27.877, 15: 37.697 } as const;

describe('Random (xoshiro128** 1.1 seeded by SplitMix32)', () => {
  it('steps xoshiro128** exactly like the reference implementation', () => {
    // Known answer from state {1, 2, 3, 4}: the test vector of the Rust crate rand_xoshiro
    // (github.com/rust-random/rngs, rand_xoshiro/src/xoshiro128starstar.rs, test "reference"),
    // whose comment says the values were produced with the reference implementation v1.1,
    // http://xoshiro.di.unimi.it/xoshiro128starstar.c. The state is set directly here, so the
    // SplitMix32 seeding is not part of this check.
    const r = new Random(0);
    Object.assign(r, { s0: 1, s1: 2, s2: 3, s3: 4 });
    const got = Array.from({ length: 10 }, () => r.nextUint32());
    expect(got).toEqual([11520, 0, 5927040, 70819200, 2031721883, 1637235492, 1287239034, 3734860849, 3729100597, 4258142804]);
  });

  it('is deterministic: the same seed and stream give the same sequence', () => {
    const a = new Random(12345, 7);
    const b = new Random(12345, 7);
    for (let i = 0; i < 1000; i++) expect(a.nextUint32()).toBe(b.nextUint32());
    const c = new Random(99);
    const d = new Random(99);
    for (let i = 0; i < 100; i++) expect(c.next()).toBe(d.next());
  });

  it('different seeds, streams, and high bits of the seed give different sequences', () => {
    const first = (r: Random): number[] => Array.from({ length: 8 }, () => r.nextUint32());
    const base = first(new Random(1));
    expect(first(new Random(2))).not.toEqual(base);
    expect(first(new Random(1, 1))).not.toEqual(base);
    expect(first(new Random(1 + 2 ** 32))).not.toEqual(base);
    expect(first(new Random(Number.MAX_SAFE_INTEGER))).not.toEqual(first(new Random(Number.MAX_SAFE_INTEGER - 1)));
    // Streams of one seed do not just shift each other.
    const s0 = first(new Random(5, 0));
    const s1 = first(new Random(5, 1));
    expect(s1.filter((v) => s0.includes(v))).toEqual([]);
  });

  it('rejects seeds that are not safe integers', () => {
    expect(() => new Random(1.5)).toThrow(RangeError);
    expect(() => new Random(Number.NaN)).toThrow(RangeError);
    expect(() => new Random(2 ** 53)).toThrow(RangeError);
  });

  it('next() is in [0, 1) and uses 53 bits', () => {
    const r = new Random(3);
    let min = 1;
    let max = 0;
    let oddMultiple = false;
    let bad = 0;
    for (let i = 0; i < 20000; i++) {
      const x = r.next();
      if (!(x >= 0 && x < 1)) bad++;
      min = Math.min(min, x);
      max = Math.max(max, x);
      // a value with bits below 2^-32 set: not a 32-bit value scaled
      if ((x * 2 ** 53) % 2 ** 21 !== 0) oddMultiple = true;
    }
    expect(bad).toBe(0);
    expect(min).toBeLessThan(1e-3);
    expect(max).toBeGreaterThan(1 - 1e-3);
    expect(oddMultiple).toBe(true);
  });

  it('nextInt(n) gives integers in [0, n), reaching both ends', () => {
    const r = new Random(8);
    for (const n of [1, 2, 3, 7, 10, 1000, 2 ** 31 + 1, 2 ** 32]) {
      let lo = Infinity;
      let hi = -Infinity;
      let bad = 0;
      for (let i = 0; i < 3000; i++) {
        const v = r.nextInt(n);
        if (!(Number.isInteger(v) && v >= 0 && v < n)) bad++;
        lo = Math.min(lo, v);
        hi = Math.max(hi, v);
      }
      expect(bad).toBe(0);
      if (n <= 10) {
        expect(lo).toBe(0);
        expect(hi).toBe(n - 1);
      }
    }
    expect(new Random(1).nextInt(1)).toBe(0);
  });

  it('nextInt rejects n outside 1..2^32 or not whole', () => {
    const r = new Random(1);
    for (const n of [0, -1, 1.5, 2 ** 32 + 1, Number.NaN, Infinity]) expect(() => r.nextInt(n)).toThrow(RangeError);
  });

  it('nextInt(10) passes a chi-square uniformity test (9 df, 0.001 critical value 27.877)', () => {
    for (const seed of [1, 2, 3, 42, 2024]) {
      const r = new Random(seed);
      const counts = new Array<number>(10).fill(0);
      const draws = 100_000;
      for (let i = 0; i < draws; i++) counts[r.nextInt(10)]!++;
      expect(chiSquare(counts, new Array<number>(10).fill(draws / 10))).toBeLessThan(CHI2_001[9]);
    }
  });

  it('next() falls evenly into 16 bins, and so do the low 4 bits of nextUint32 (15 df, 37.697)', () => {
    const r = new Random(77);
    const bins = new Array<number>(16).fill(0);
    const low = new Array<number>(16).fill(0);
    const draws = 64_000;
    for (let i = 0; i < draws; i++) {
      bins[Math.floor(r.next() * 16)]!++;
      low[r.nextUint32() & 15]!++;
    }
    const expected = new Array<number>(16).fill(draws / 16);
    expect(chiSquare(bins, expected)).toBeLessThan(CHI2_001[15]);
    expect(chiSquare(low, expected)).toBeLessThan(CHI2_001[15]);
  });

  it('nextInt has no modulo bias: for n = 3 * 2^30, values below 2^30 come a third of the time', () => {
    // A plain `nextUint32() % n` would return values below 2^30 half of the time.
    const n = 3 * 2 ** 30;
    const r = new Random(5);
    const draws = 30_000;
    let below = 0;
    for (let i = 0; i < draws; i++) if (r.nextInt(n) < 2 ** 30) below++;
    const stat = chiSquare([below, draws - below], [draws / 3, (2 * draws) / 3]);
    expect(stat).toBeLessThan(CHI2_001[1]);
  });
});
