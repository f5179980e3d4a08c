/**
 * How an assignment step starts: candidate zones by value at the start prices (withCheapest),
 * start prices from coarse copies of the stops for a step that has none, and the whole-stop
 * outcome of a cold step under a tight band on many stops.
 *
 * References: an exhaustive scan over every zone (for the candidate lists); LP duality (the
 * Lagrangian dual bound equals the LP optimum exactly when the LP is solved to optimality: any LP
 * text, e.g. Ahuja, Magnanti and Orlin, "Network Flows", 1993, section 9.4); the band of each
 * zone is re-added from the assignment here, not taken from the solver's report.
 */
import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { angle2To, nearestCandidates, withCheapest } from '../../src/solve/candidates.js';
import { assignWithLimits, solveLimitLp } from '../../src/solve/capacity.js';
import { zoneBounds } from '../../src/solve/limits.js';
import { solveZones } from '../../src/solve/kmeans.js';
import { unitFromLonLat } from '../../src/geo/unit.js';
import { Random } from '../../src/util/random.js';
import { clusteredStops } from '../../bench/data.js';

function randomUnits(rng: Random, n: number): Float64Array {
  const u = new Float64Array(3 * n);
  for (let i = 0; i < n; i++) u.set(unitFromLonLat(-4 + rng.next() * 8, 48 + rng.next() * 6), 3 * i);
  return u;
}

describe('withCheapest', () => {
  it('adds, beyond the nearest zones, exactly the zones of least factor x angle^2 + price (an exhaustive scan)', () => {
    fc.assert(
      fc.property(fc.integer({ min: 1, max: 1e6 }), fc.integer({ min: 2, max: 30 }), fc.integer({ min: 1, max: 8 }), fc.integer({ min: 0, max: 6 }), fc.boolean(), (seed, k, near, extra, weighted) => {
        const rng = new Random(seed, 3);
        const n = 40;
        const units = randomUnits(rng, n);
        const centres = randomUnits(rng, k);
        // Prices of the size of the squared angles between zones, either sign (as under a band).
        const price = Float64Array.from({ length: k }, () => (rng.next() - 0.5) * 4e-3);
        const factor = Float64Array.from({ length: n }, () => (weighted ? rng.nextInt(5) : 1));
        const base = nearestCandidates(units, centres, near);
        const cand = withCheapest(base, units, centres, price, factor, extra);
        const c = base.c;
        const e = Math.min(extra, k - c);
        expect(cand.c).toBe(c + Math.max(0, e));
        for (let i = 0; i < n; i++) {
          // The nearest ones first, as they were.
          for (let s = 0; s < c; s++) expect(cand.zone[i * cand.c + s]).toBe(base.zone[i * c + s]);
          if (e <= 0) continue;
          const nearest = new Set(Array.from(base.zone.subarray(i * c, i * c + c)));
          const values = [];
          for (let j = 0; j < k; j++) if (!nearest.has(j)) values.push(factor[i]! * angle2To(units, i, centres, j) + price[j]!);
          values.sort((a, b) => a - b);
          const got = [];
          for (let s = c; s < cand.c; s++) {
            const j = cand.zone[i * cand.c + s]!;
            expect(nearest.has(j)).toBe(false);
            expect(cand.angle2[i * cand.c + s]).toBeCloseTo(angle2To(units, i, centres, j), 15);
            got.push(factor[i]! * angle2To(units, i, centres, j) + price[j]!);
          }
          got.sort((a, b) => a - b);
          // The same values as the e least (ties may pick either zone).
          for (let s = 0; s < e; s++) expect(got[s]!).toBeCloseTo(values[s]!, 15);
        }
      }),
      { numRuns: 150, seed: 11 },
    );
  });
});

describe('an assignment step without start prices, on many stops', () => {
  // The benchmark's clustered stops (towns of very different sizes, 4% heavy stops), plain k-means
  // centres, balance 5%: most zones are held at a bound, far from their nearest-centre loads.
  const data = clusteredStops(50_000);
  const input = { units: data.units, demand: data.demand };
  const k = 40;
  const { bounds } = zoneBounds({ balance: 0.05 }, k, data.demand, null);
  const centresOf = (seed: number): Float64Array => solveZones(input, { zones: k, seed, restarts: 1 }).centres;

  it('solves the LP to optimality from coarse copies: objective equals its dual bound and the LP from zero prices', () => {
    const centres = centresOf(1);
    const cold = solveLimitLp(data.units, data.demand, centres, bounds, null);
    // Explicit zero prices: no coarse copies, every stop from its nearest centre.
    const zero = solveLimitLp(data.units, data.demand, centres, bounds, null, { warm: { demand: new Float64Array(k), stops: new Float64Array(k) } });
    expect(cold.blocked).toBe(false);
    expect(Math.abs(cold.lpObjectiveKm2 - cold.lowerBoundKm2) / cold.lpObjectiveKm2).toBeLessThan(1e-9);
    expect(Math.abs(cold.lpObjectiveKm2 - zero.lpObjectiveKm2) / zero.lpObjectiveKm2).toBeLessThan(1e-9);
    // The split flow holds every zone's band.
    const load = new Float64Array(k);
    cold.flow.forEachPiece((i, z, x) => {
      load[z]! += x * data.demand[i]!;
    });
    for (let j = 0; j < k; j++) {
      expect(load[j]!).toBeLessThanOrEqual(bounds.maxDemand[j]! * (1 + 1e-9));
      expect(load[j]!).toBeGreaterThanOrEqual(bounds.minDemand[j]! * (1 - 1e-9));
    }
    // The start prices came from the coarse copies (only they bring the 4 extra zones per stop),
    // and the step from them needs fewer shortest paths than the one from zero prices.
    expect(cold.candidates.c).toBe(12);
    expect(zero.candidates.c).toBe(8);
    expect(cold.flow.augmentations).toBeLessThan(zero.flow.augmentations);
  });

  it('with locked stops, stops of no demand and per-zone capacities under the band: the same LP optimum as from zero prices', () => {
    const n = 20_000;
    const part = clusteredStops(n);
    const kk = 20;
    const rng = new Random(5, 1);
    const demand = part.demand.slice();
    for (let t = 0; t < 400; t++) demand[rng.nextInt(n)] = 0;
    const centres = solveZones({ units: part.units, demand }, { zones: kk, seed: 2, restarts: 1 }).centres;
    const locked = new Int32Array(n).fill(-1);
    for (let t = 0; t < 200; t++) locked[rng.nextInt(n)] = rng.nextInt(kk);
    let total = 0;
    for (let i = 0; i < n; i++) total += demand[i]!;
    // Every third zone a capacity of 2% over the mean, inside the band of 5%.
    const capacity = Array.from({ length: kk }, (_, j) => (j % 3 === 0 ? 1.02 : 10) * (total / kk));
    const b = zoneBounds({ balance: 0.05, capacity }, kk, demand, locked).bounds;
    const cold = solveLimitLp(part.units, demand, centres, b, locked);
    const zero = solveLimitLp(part.units, demand, centres, b, locked, { warm: { demand: new Float64Array(kk), stops: new Float64Array(kk) } });
    expect(cold.blocked).toBe(false);
    expect(cold.candidates.c).toBe(12);
    expect(Math.abs(cold.lpObjectiveKm2 - cold.lowerBoundKm2) / cold.lpObjectiveKm2).toBeLessThan(1e-9);
    expect(Math.abs(cold.lpObjectiveKm2 - zero.lpObjectiveKm2) / zero.lpObjectiveKm2).toBeLessThan(1e-9);
    // Loads with the locked stops added back hold every bound.
    const load = Float64Array.from(cold.lockedDemand);
    cold.flow.forEachPiece((i, z, x) => {
      load[z]! += x * demand[i]!;
    });
    for (let j = 0; j < kk; j++) {
      expect(load[j]!).toBeLessThanOrEqual(b.maxDemand[j]! * (1 + 1e-9));
      expect(load[j]!).toBeGreaterThanOrEqual(b.minDemand[j]! * (1 - 1e-9));
    }
    // The whole-stop step keeps the locked stops where they were locked.
    const r = assignWithLimits(part.units, demand, centres, b, locked);
    for (let i = 0; i < n; i++) if (locked[i]! >= 0) expect(r.assignment[i]).toBe(locked[i]);
    expect(r.objectiveKm2).toBeGreaterThanOrEqual(r.lowerBoundKm2 * (1 - 1e-12));
  });

  it('places whole stops within the band (these two starts broke it before the margins were continued)', () => {
    for (const seed of [1, 3]) {
      const r = assignWithLimits(data.units, data.demand, centresOf(seed), bounds, null);
      expect(r.violations).toEqual([]);
      expect(r.feasible).toBe(true);
      const load = new Float64Array(k);
      for (let i = 0; i < data.demand.length; i++) load[r.assignment[i]!]! += data.demand[i]!;
      // Integer demand: the sums are exact.
      for (let j = 0; j < k; j++) {
        expect(load[j]!).toBeLessThanOrEqual(bounds.maxDemand[j]!);
        expect(load[j]!).toBeGreaterThanOrEqual(bounds.minDemand[j]!);
      }
      expect(r.objectiveKm2).toBeGreaterThanOrEqual(r.lowerBoundKm2);
      expect(r.gap).toBeLessThan(0.05);
    }
  });
});
