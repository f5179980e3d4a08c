/**
 * aggregateStops (src/solve/aggregate.ts), the coarse copies of the limited loop. The checks are
 * conservation laws, not outside values: total demand is kept exactly (the reason for merging
 * rather than sampling), each merged point is a unit vector inside the cells' reach, locked stops
 * pass through unchanged with their zones, and the cell count respects the target.
 */
import { describe, expect, it } from 'vitest';
import { aggregateStops } from '../../src/solve/aggregate.js';
import { unitsFromLonLat } from '../../src/geo/unit.js';

function towns(n: number): { units: Float64Array; demand: Float64Array; lonLat: Float64Array } {
  let x = 99;
  const next = (): number => {
    x = (Math.imul(x, 1103515245) + 12345) >>> 0;
    return x / 2 ** 32;
  };
  const lonLat = new Float64Array(2 * n);
  const demand = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    const t = Math.floor(next() * 5);
    lonLat[2 * i] = -3 + t * 2 + (next() - 0.5) * 0.3;
    lonLat[2 * i + 1] = 40 + t + (next() - 0.5) * 0.3;
    demand[i] = next() < 0.05 ? 0 : 1 + Math.floor(next() * 20);
  }
  return { units: unitsFromLonLat(lonLat), demand, lonLat };
}

describe('aggregateStops', () => {
  const n = 30_000;
  const { units, demand } = towns(n);
  const total = demand.reduce((a, b) => a + b, 0);

  it('keeps the total demand, gives unit vectors, stays within the target and near it', () => {
    for (const target of [500, 2_000, 10_000]) {
      const a = aggregateStops(units, demand, null, target);
      expect(a.demand.length).toBeLessThanOrEqual(target);
      expect(a.demand.length).toBeGreaterThan(target / 4);
      expect(a.demand.reduce((s, d) => s + d, 0)).toBeCloseTo(total, 6);
      for (let c = 0; c < a.demand.length; c++) expect(Math.hypot(a.units[3 * c]!, a.units[3 * c + 1]!, a.units[3 * c + 2]!)).toBeCloseTo(1, 12);
      expect(a.locked).toBeNull();
    }
  });

  it('each stop lies within one cell diagonal of its merged point: the demand of every region is where it was', () => {
    const a = aggregateStops(units, demand, null, 2_000);
    // Demand within 0.5 degrees (a region much larger than a cell) of a few probe points is the
    // same, up to the cells on the region's edge.
    const probe = unitsFromLonLat(Float64Array.from([-3, 40, 1, 42, 5, 44]));
    for (let p = 0; p < 3; p++) {
      const near = (u: Float64Array, d: Float64Array, r: number): number => {
        let s = 0;
        for (let i = 0; i < d.length; i++) {
          const dot = u[3 * i]! * probe[3 * p]! + u[3 * i + 1]! * probe[3 * p + 1]! + u[3 * i + 2]! * probe[3 * p + 2]!;
          if (Math.acos(Math.min(1, dot)) < r) s += d[i]!;
        }
        return s;
      };
      const r = (0.5 * Math.PI) / 180;
      const step = a.step * 2;
      expect(near(a.units, a.demand, r)).toBeGreaterThanOrEqual(near(units, demand, r - step) - 1e-9);
      expect(near(a.units, a.demand, r)).toBeLessThanOrEqual(near(units, demand, r + step) + 1e-9);
    }
  });

  it('passes locked stops through with their zones, after the cells, and is deterministic', () => {
    const locked = new Int32Array(n).fill(-1);
    for (let i = 0; i < n; i += 1000) locked[i] = (i / 1000) % 3;
    const a = aggregateStops(units, demand, locked, 1_000);
    const b = aggregateStops(units, demand, locked, 1_000);
    expect(Array.from(a.units)).toEqual(Array.from(b.units));
    const lockedOut = Array.from(a.locked!).filter((z) => z >= 0);
    expect(lockedOut).toEqual(Array.from(locked).filter((z) => z >= 0));
    const cells = a.demand.length - lockedOut.length;
    expect(cells).toBeLessThanOrEqual(1_000);
    for (let t = 0, i = 0; i < n; i++) {
      if (locked[i]! < 0) continue;
      expect(a.demand[cells + t]).toBe(demand[i]);
      expect(Array.from(a.units.subarray(3 * (cells + t), 3 * (cells + t) + 3))).toEqual(Array.from(units.subarray(3 * i, 3 * i + 3)));
      t++;
    }
    expect(a.demand.reduce((s, d) => s + d, 0)).toBeCloseTo(total, 6);
  });
});
