import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { firstOccurrence, firstOfEqualStrings } from '../../src/io/stopset.js';

/** The plain definition: index of the first equal item, by a Map. */
function firstByMap<T>(keys: readonly T[]): number[] {
  const seen = new Map<T, number>();
  return keys.map((k, i) => {
    const at = seen.get(k);
    if (at !== undefined) return at;
    seen.set(k, i);
    return i;
  });
}

describe('firstOfEqualStrings', () => {
  it('gives each string the index of its first occurrence', () => {
    expect(Array.from(firstOfEqualStrings(['a', 'b', 'a', 'c', 'b', 'a']))).toEqual([0, 1, 0, 3, 1, 0]);
    expect(Array.from(firstOfEqualStrings([]))).toEqual([]);
    expect(Array.from(firstOfEqualStrings(['', '', 'x']))).toEqual([0, 0, 2]);
  });

  it('compares code units exactly: no trimming, case or Unicode normalisation', () => {
    // "é" precomposed (U+00E9) and decomposed (e + U+0301) are different ids.
    expect(Array.from(firstOfEqualStrings(['P1', 'p1', 'P1 ', '\u00e9', 'e\u0301', 'P1']))).toEqual([0, 1, 2, 3, 4, 0]);
  });

  it('agrees with a Map on random ids, with many repeats', () => {
    const id = fc.string({ unit: fc.constantFrom('a', 'b', '1', 'é', '📦'), maxLength: 3 });
    fc.assert(
      fc.property(fc.array(id, { maxLength: 300 }), (ids) => {
        expect(Array.from(firstOfEqualStrings(ids))).toEqual(firstByMap(ids));
      }),
      { numRuns: 500 },
    );
  });

  it('agrees with a Map on 100 000 ids (table growth and probing)', () => {
    const ids = Array.from({ length: 100_000 }, (_, i) => `S-${(i * 7919) % 60_000}`);
    expect(Array.from(firstOfEqualStrings(ids))).toEqual(firstByMap(ids));
  });
});

describe('firstOccurrence', () => {
  const ll = (...pairs: [number, number][]): Float64Array => Float64Array.from(pairs.flat());

  it('gives each position the index of the first stop at exactly the same position', () => {
    expect(Array.from(firstOccurrence(ll([2.35, 48.85], [2.29, 48.85], [2.35, 48.85], [48.85, 2.35])))).toEqual([0, 1, 0, 3]);
    expect(Array.from(firstOccurrence(new Float64Array(0)))).toEqual([]);
  });

  it('treats -0 as 0 (IEEE 754: -0 == 0), and nearby doubles as different', () => {
    expect(Array.from(firstOccurrence(ll([0, 0], [-0, 0], [0, -0], [-0, -0])))).toEqual([0, 0, 0, 0]);
    expect(Array.from(firstOccurrence(ll([-0, 1], [0, 1])))).toEqual([0, 0]);
    const next = 48.85 + Number.EPSILON * 32;
    expect(next).not.toBe(48.85);
    expect(Array.from(firstOccurrence(ll([2.35, 48.85], [2.35, next])))).toEqual([0, 1]);
  });

  it('treats -0 as 0 in a big table too (where the sign bit reaches the bucket index)', () => {
    const n = 70_000;
    const lonLat = new Float64Array(2 * (n + 4));
    for (let i = 0; i < n; i++) {
      lonLat[2 * i] = 10 + i * 1e-4;
      lonLat[2 * i + 1] = 40 + (i % 7) * 1e-3;
    }
    lonLat.set([0, 5, -0, 5, 5, 0, 5, -0], 2 * n);
    const first = firstOccurrence(lonLat);
    expect(Array.from(first.subarray(n))).toEqual([n, n, n + 2, n + 2]);
  });

  it('agrees with a Map of "lon,lat" keys on random positions, with many repeats', () => {
    const coordinate = fc.constantFrom(0, -0, 1, -1, 2.35, 48.85, 180, -180, 90, 1e-300);
    fc.assert(
      fc.property(fc.array(fc.tuple(coordinate, coordinate), { maxLength: 300 }), (pairs) => {
        const keys = pairs.map(([lon, lat]) => `${lon + 0},${lat + 0}`);
        expect(Array.from(firstOccurrence(ll(...pairs)))).toEqual(firstByMap(keys));
      }),
      { numRuns: 500 },
    );
  });

  it('agrees with a Map on 100 000 random positions drawn from a small grid', () => {
    const pairs: [number, number][] = [];
    let s = 1;
    for (let i = 0; i < 100_000; i++) {
      s = (s * 48271) % 2147483647;
      pairs.push([((s % 300) - 150) / 10, (((s >> 9) % 300) - 150) / 10]);
    }
    const keys = pairs.map(([lon, lat]) => `${lon + 0},${lat + 0}`);
    expect(Array.from(firstOccurrence(Float64Array.from(pairs.flat())))).toEqual(firstByMap(keys));
  });
});
