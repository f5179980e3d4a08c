import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { seedCentres, seedScratch } from '../../src/solve/seed.js';
import { Random } from '../../src/util/random.js';
import { dot, stopsFromLonLat } from './support.js';

function seed(units: Float64Array, demand: Float64Array, k: number, rng: Random, localTrials?: number): { centres: Float64Array; scratch: ReturnType<typeof seedScratch> } {
  const centres = new Float64Array(3 * k);
  const scratch = seedScratch(demand.length);
  if (localTrials === undefined) seedCentres(units, demand, k, rng, centres, scratch);
  // A 7th argument selects plain k-means++ (localTrials = 1) where seedCentres has the greedy
  // variant; a seedCentres without it ignores the extra argument and is plain k-means++ anyway.
  else (seedCentres as (...args: unknown[]) => void)(units, demand, k, rng, centres, scratch, localTrials);
  return { centres, scratch };
}

/** Index of the stop sitting exactly at centre j (the seeds are stop positions), or -1. */
function stopAt(units: Float64Array, centres: Float64Array, j: number): number {
  for (let i = 0; i < units.length / 3; i++) {
    if (units[3 * i] === centres[3 * j] && units[3 * i + 1] === centres[3 * j + 1] && units[3 * i + 2] === centres[3 * j + 2]) return i;
  }
  return -1;
}

function distinctCentres(centres: Float64Array): number {
  return new Set(Array.from({ length: centres.length / 3 }, (_, j) => `${centres[3 * j]},${centres[3 * j + 1]},${centres[3 * j + 2]}`)).size;
}

/** A small random region: 60 stops within about 200 km, some duplicated, a third with demand 0. */
function region(r: Random): { units: Float64Array; demand: Float64Array } {
  const pts: [number, number][] = [];
  const demand: number[] = [];
  for (let i = 0; i < 60; i++) {
    if (i > 5 && r.next() < 0.2) pts.push(pts[r.nextInt(i)]!);
    else pts.push([8 + 2 * r.next(), 47 + 1.5 * r.next()]);
    demand.push(i % 3 === 0 ? 0 : 1 + r.nextInt(5));
  }
  return stopsFromLonLat(pts, demand);
}

describe('weighted k-means++ seeding (seedCentres)', () => {
  it('never draws a stop with demand 0 as the first centre', () => {
    for (let s = 0; s < 300; s++) {
      const { units, demand } = region(new Random(s, 99));
      const { centres } = seed(units, demand, 4, new Random(s));
      const i = stopAt(units, centres, 0);
      expect(i).toBeGreaterThanOrEqual(0);
      // the position may be shared by a zero-demand duplicate; some stop there must carry demand
      let positive = false;
      for (let t = 0; t < demand.length; t++) {
        if (units[3 * t] === units[3 * i] && units[3 * t + 1] === units[3 * i + 1] && units[3 * t + 2] === units[3 * i + 2] && demand[t]! > 0) positive = true;
      }
      expect(positive).toBe(true);
    }
  });

  it('puts the first centre where the demand is concentrated', () => {
    // 100 stops of demand 1e-9 and one of demand 1e6 (Rotterdam): the first draw lands there
    // unless the draw ignores demand (chance of missing: about 1e-13 per seed).
    const pts: [number, number][] = [];
    const demand: number[] = [];
    for (let i = 0; i < 100; i++) {
      pts.push([5 + (i % 10) * 0.1, 52 + Math.floor(i / 10) * 0.1]);
      demand.push(1e-9);
    }
    pts.splice(37, 0, [4.48, 51.92]);
    demand.splice(37, 0, 1e6);
    const { units, demand: w } = stopsFromLonLat(pts, demand);
    for (let s = 0; s < 200; s++) {
      const { centres } = seed(units, w, 3, new Random(s));
      expect(stopAt(units, centres, 0)).toBe(37);
    }
  });

  it('plain k-means++ draws the next centre with probability proportional to demand x angle^2 (the D^2 rule)', () => {
    // First centre forced to A (almost all demand); B is 1 degree from A, C 2 degrees, equal
    // demand: P(second = B) = 1 / (1 + 4) = 0.2. A rule weighting by angle (not squared) gives 1/3.
    const { units, demand } = stopsFromLonLat([[0, 0], [1, 0], [2, 0]], [1e12, 1, 1]);
    const draws = 5000;
    let b = 0;
    for (let s = 0; s < draws; s++) {
      const { centres } = seed(units, demand, 2, new Random(s, 3), 1);
      expect(stopAt(units, centres, 0)).toBe(0);
      if (stopAt(units, centres, 1) === 1) b++;
    }
    // Binomial(5000, 0.2): standard deviation 28.3; allow 4 of them.
    expect(Math.abs(b - 0.2 * draws)).toBeLessThan(4 * Math.sqrt(draws * 0.2 * 0.8));
  });

  it('yields K distinct locations, even when K equals the number of distinct locations', () => {
    fc.assert(
      fc.property(fc.integer({ min: 0, max: 2 ** 31 }), fc.integer({ min: 1, max: 12 }), (s, kWanted) => {
        // 6 to 12 distinct locations, each repeated, some with no demand at all
        const r = new Random(s, 5);
        const locations = 6 + r.nextInt(7);
        const pts: [number, number][] = [];
        const demand: number[] = [];
        for (let j = 0; j < locations; j++) {
          const at: [number, number] = [-3 + r.next(), 40 + r.next()];
          const copies = 1 + r.nextInt(5);
          const w = j < 2 || r.next() < 0.5 ? 1 + r.nextInt(3) : 0;
          for (let c = 0; c < copies; c++) {
            pts.push(at);
            demand.push(w);
          }
        }
        const k = Math.min(kWanted, locations);
        const { units, demand: dm } = stopsFromLonLat(pts, demand);
        const { centres, scratch } = seed(units, dm, k, new Random(s));
        expect(distinctCentres(centres)).toBe(k);
        for (let j = 0; j < k; j++) expect(stopAt(units, centres, j)).toBeGreaterThanOrEqual(0);
        // scratch.nearest is each stop's nearest seed, and nearestChord2 the squared chord to it
        for (let i = 0; i < dm.length; i++) {
          let best = -Infinity;
          for (let j = 0; j < k; j++) best = Math.max(best, dot(units, i, centres, j));
          const a = scratch.nearest[i]!;
          expect(dot(units, i, centres, a)).toBeGreaterThanOrEqual(best - 1e-15);
          const dx = units[3 * i]! - centres[3 * a]!;
          const dy = units[3 * i + 1]! - centres[3 * a + 1]!;
          const dz = units[3 * i + 2]! - centres[3 * a + 2]!;
          expect(scratch.nearestChord2[i]).toBe(dx * dx + dy * dy + dz * dz);
        }
      }),
      { numRuns: 150 },
    );
  });

  it('takes locations with no demand when the demand-carrying ones run out', () => {
    // Two locations carry demand, three carry none: K = 5 needs all five.
    const { units, demand } = stopsFromLonLat([[0, 0], [0, 0], [1, 0], [2, 0], [3, 0], [4, 1]], [2, 2, 3, 0, 0, 0]);
    for (let s = 0; s < 20; s++) {
      const { centres } = seed(units, demand, 5, new Random(s));
      expect(distinctCentres(centres)).toBe(5);
    }
  });

  it('is deterministic for a seed and depends on it', () => {
    const { units, demand } = region(new Random(1, 99));
    const a = seed(units, demand, 6, new Random(7)).centres;
    const b = seed(units, demand, 6, new Random(7)).centres;
    expect([...a]).toEqual([...b]);
    let differs = false;
    for (let s = 8; s < 20 && !differs; s++) differs = seed(units, demand, 6, new Random(s)).centres.some((v, i) => v !== a[i]);
    expect(differs).toBe(true);
  });
});
