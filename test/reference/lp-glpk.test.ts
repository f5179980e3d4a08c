/**
 * The capacity-limited assignment step against an independent LP solver: glpk.js 5.0.0, the
 * GNU Linear Programming Kit (GLPK) compiled to WebAssembly (https://github.com/jvail/glpk.js,
 * https://www.gnu.org/software/glpk/), simplex with presolve.
 *
 * At fixed centres the step is a transportation problem:
 *   min  sum_ij w_i * angle2(i, j) * R^2 * x_ij
 *   s.t. sum_j x_ij = 1 (every stop),  lower_j <= sum_i a_i x_ij <= upper_j (every zone),  x >= 0,
 * with a_i = w_i for demand bounds (capacity, balance band) and a_i = 1 for stop-count bounds.
 * GLPK's optimum is the reference for the LP objective and the dual bound that
 * src/solve/capacity.ts computes by min-cost flow.
 */
import { beforeAll, describe, expect, it } from 'vitest';
import GLPK from 'glpk.js/node';
import type { GLPK as Glpk, LP } from 'glpk.js/node';
import { assignWithLimits, solveLimitLp, type LimitedAssignment, type ZoneBounds } from '../../src/solve/capacity.js';
import { angle2To } from '../../src/solve/candidates.js';
import { EARTH_RADIUS_KM } from '../../src/geo/constants.js';
import { zoneBounds, type LimitSettings } from '../../src/solve/limits.js';
import { solveZones } from '../../src/solve/kmeans.js';
import { unitsFromLonLat } from '../../src/geo/unit.js';
import { Random } from '../../src/util/random.js';

const R2 = EARTH_RADIUS_KM * EARTH_RADIUS_KM;

let glpk: Glpk;
beforeAll(async () => {
  glpk = await GLPK();
});

/** Stops in a dozen towns of different spread over ~300 km; demand 1, or skewed 1..3 with 5% of 5..24. */
function towns(n: number, seed: number, weighted: boolean): { units: Float64Array; demand: Float64Array } {
  const rng = new Random(seed, 99);
  const t = Array.from({ length: 12 }, () => ({ lon: 8 + rng.next() * 4, lat: 47 + rng.next() * 3, sd: 0.02 + rng.next() * 0.15 }));
  const lonLat = new Float64Array(2 * n);
  const demand = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    const town = t[rng.nextInt(t.length)]!;
    const r = Math.sqrt(-2 * Math.log(1 - rng.next()));
    const a = 2 * Math.PI * rng.next();
    lonLat[2 * i] = town.lon + (town.sd * r * Math.cos(a)) / Math.cos((town.lat * Math.PI) / 180);
    lonLat[2 * i + 1] = town.lat + town.sd * r * Math.sin(a);
    demand[i] = weighted ? (rng.next() < 0.05 ? 5 + rng.nextInt(20) : 1 + rng.nextInt(3)) : 1;
  }
  return { units: unitsFromLonLat(lonLat), demand };
}

interface GlpkOptimum {
  readonly z: number;
  readonly status: number;
  /** Stops GLPK's vertex solution splits between zones. */
  readonly split: number;
}

/**
 * The LP above solved by GLPK (glpk.js). Demand rows for demand bounds, stop-count rows for
 * stop-count bounds (both when both are set); locked stops fixed to their zone.
 */
function glpkOptimum(units: Float64Array, demand: Float64Array, centres: Float64Array, b: ZoneBounds, locked: Int32Array | null = null): GlpkOptimum {
  const n = demand.length;
  const k = centres.length / 3;
  const vars: { name: string; coef: number }[] = [];
  const subjectTo: LP['subjectTo'] = [];
  const byDemand = Array.from({ length: k }, () => [] as { name: string; coef: number }[]);
  const byStops = Array.from({ length: k }, () => [] as { name: string; coef: number }[]);
  const bounds: NonNullable<LP['bounds']> = [];
  for (let i = 0; i < n; i++) {
    const row: { name: string; coef: number }[] = [];
    for (let j = 0; j < k; j++) {
      const name = `x${i}_${j}`;
      vars.push({ name, coef: demand[i]! * angle2To(units, i, centres, j) * R2 });
      row.push({ name, coef: 1 });
      byDemand[j]!.push({ name, coef: demand[i]! });
      byStops[j]!.push({ name, coef: 1 });
      if (locked && locked[i]! >= 0) {
        const v = locked[i] === j ? 1 : 0;
        bounds.push({ name, type: glpk.GLP_FX, lb: v, ub: v });
      }
    }
    subjectTo.push({ name: `stop${i}`, vars: row, bnds: { type: glpk.GLP_FX, lb: 1, ub: 1 } });
  }
  const bounded = (name: string, row: { name: string; coef: number }[], lo: number, hi: number): void => {
    const hasLo = lo > 0;
    const hasHi = Number.isFinite(hi);
    if (!hasLo && !hasHi) return;
    const type = hasLo && hasHi ? glpk.GLP_DB : hasLo ? glpk.GLP_LO : glpk.GLP_UP;
    subjectTo.push({ name, vars: row, bnds: { type, lb: hasLo ? lo : 0, ub: hasHi ? hi : 0 } });
  };
  for (let j = 0; j < k; j++) {
    bounded(`demand${j}`, byDemand[j]!, b.minDemand[j]!, b.maxDemand[j]!);
    bounded(`stops${j}`, byStops[j]!, b.minStops[j]!, b.maxStops[j]!);
  }
  const lp: LP = { name: 'assignment', objective: { direction: glpk.GLP_MIN, name: 'km2', vars }, subjectTo, bounds };
  const res = glpk.solve(lp, { msglev: glpk.GLP_MSG_OFF });
  let split = 0;
  for (let i = 0; i < n; i++) {
    let positive = 0;
    for (let j = 0; j < k; j++) if ((res.result.vars[`x${i}_${j}`] ?? 0) > 1e-9) positive++;
    if (positive > 1) split++;
  }
  return { z: res.result.z, status: res.result.status, split };
}

function rel(a: number, b: number): number {
  return Math.abs(a - b) / Math.abs(b);
}

/** Zone loads (demand, stops) of a whole-stop assignment, recomputed. */
function loads(demand: Float64Array, assignment: Int32Array, k: number): { d: number[]; s: number[] } {
  const d = new Array<number>(k).fill(0);
  const s = new Array<number>(k).fill(0);
  assignment.forEach((z, i) => {
    d[z]! += demand[i]!;
    s[z]!++;
  });
  return { d, s };
}

function expectWithin(demand: Float64Array, r: LimitedAssignment, b: ZoneBounds): void {
  const k = b.maxDemand.length;
  const { d, s } = loads(demand, r.assignment, k);
  for (let j = 0; j < k; j++) {
    expect(d[j]!).toBeLessThanOrEqual(b.maxDemand[j]! + 1e-9);
    expect(d[j]!).toBeGreaterThanOrEqual(b.minDemand[j]! - 1e-9);
    expect(s[j]!).toBeLessThanOrEqual(b.maxStops[j]!);
    expect(s[j]!).toBeGreaterThanOrEqual(b.minStops[j]!);
  }
}

interface Case {
  readonly name: string;
  readonly n: number;
  readonly k: number;
  readonly weighted: boolean;
  readonly limits: (total: number, k: number) => LimitSettings;
  /** Integral LP (unit supplies, integer bounds): the whole-stop assignment must reach the LP optimum. */
  readonly integral: boolean;
}

const cases: Case[] = [
  { name: 'unit demand, capacity only', n: 1500, k: 4, weighted: false, limits: (t, k) => ({ capacity: Math.ceil((t / k) * 1.02) }), integral: true },
  // mean 400, band [380, 420]: integer bounds (up to the last bit of 400 x 0.95).
  { name: 'unit demand, balance band', n: 2000, k: 5, weighted: false, limits: () => ({ balance: 0.05 }), integral: true },
  { name: 'weighted demand, capacity only', n: 3000, k: 10, weighted: true, limits: (t, k) => ({ capacity: Math.ceil((t / k) * 1.03) }), integral: false },
  { name: 'weighted demand, balance band (both bounds)', n: 2000, k: 6, weighted: true, limits: () => ({ balance: 0.04 }), integral: false },
  // Stop-count bounds only: the flow carries stop counts (supply 1, cost w x angle^2), so with
  // integer bounds the LP is integral too (transportation polytope, totally unimodular).
  { name: 'weighted demand, max stops only', n: 2400, k: 8, weighted: true, limits: (_t, k) => ({ maxStops: Math.ceil((2400 / k) * 1.03) }), integral: true },
  { name: 'weighted demand, min and max stops', n: 2000, k: 8, weighted: true, limits: () => ({ minStops: 235, maxStops: 265 }), integral: true },
];

describe('assignWithLimits against the LP optimum of glpk.js (GNU Linear Programming Kit)', () => {
  for (const c of cases) {
    it(c.name, () => {
      const s = towns(c.n, c.n + c.k, c.weighted);
      const total = s.demand.reduce((a, w) => a + w, 0);
      const centres = solveZones(s, { zones: c.k, seed: 1, restarts: 1 }).centres;
      const { bounds } = zoneBounds(c.limits(total, c.k), c.k, s.demand, null);
      const r = assignWithLimits(s.units, s.demand, centres, bounds, null);
      // Reference: glpk.js (GLPK simplex), status GLP_OPT.
      const ref = glpkOptimum(s.units, s.demand, centres, bounds);
      expect(ref.status).toBe(glpk.GLP_OPT);
      // The LP and its dual bound are exact (glpk.js optimum within 1e-6 relative).
      expect(rel(r.lowerBoundKm2, ref.z)).toBeLessThan(1e-6);
      expect(rel(r.lpObjectiveKm2, ref.z)).toBeLessThan(1e-6);
      // The bounds were set loose enough for whole stops: the plan meets them.
      expect(r.feasible).toBe(true);
      expect(r.violations).toEqual([]);
      expectWithin(s.demand, r, bounds);
      // Whole stops cost at least the LP optimum (glpk.js), and the gap is as reported.
      expect(r.objectiveKm2).toBeGreaterThanOrEqual(ref.z * (1 - 1e-9));
      expect(Math.abs((r.objectiveKm2 - r.lowerBoundKm2) / r.objectiveKm2 - r.gap)).toBeLessThan(1e-12);
      // At most K-1 stops split by an optimal vertex (GLPK's), and by the flow's optimum too.
      expect(ref.split).toBeLessThanOrEqual(c.k - 1);
      expect(r.split).toBeLessThanOrEqual(c.k - 1);
      if (c.integral) {
        // Integral LP: no split stop, the whole-stop objective is the glpk.js optimum.
        expect(r.split).toBe(0);
        expect(rel(r.objectiveKm2, ref.z)).toBeLessThan(1e-6);
        expect(r.gap).toBeLessThan(1e-9);
      } else {
        // Weighted demand: GLPK's optimal vertex splits stops, so the rounding is exercised.
        expect(ref.split).toBeGreaterThan(0);
        expect(r.split).toBeGreaterThan(0);
      }
    });
  }

  // Quality, not correctness (a known shortfall, kept as an expected failure): on 'weighted
  // demand, capacity only' the LP splits a few stops between full zones. Rounding weighs each
  // placement's cost against the breach it makes, priced at the zones' LP prices, and the repair
  // moves single stops and chains of two; that leaves a gap of 0.45% here (it was 0.82% when
  // rounding took the least breach first). glpk.js' MIP (branch and bound on the same instance,
  // binaries, mipgap 1e-5, ~5 s) finds whole stops within 0.0047% of the LP bound.
  it.fails('rounding and repair come within 0.1% of the LP bound where whole stops within 0.005% exist (glpk.js MIP)', () => {
    const k = 10;
    const s = towns(3000, 3010, true);
    const total = s.demand.reduce((a, w) => a + w, 0);
    const centres = solveZones(s, { zones: k, seed: 1, restarts: 1 }).centres;
    const { bounds } = zoneBounds({ capacity: Math.ceil((total / k) * 1.03) }, k, s.demand, null);
    const r = assignWithLimits(s.units, s.demand, centres, bounds, null);
    expect(r.feasible).toBe(true);
    expect(r.gap).toBeLessThan(1e-3);
  });

  it('with 2 candidate zones per stop the LP is still exact: a cheaper zone beyond a stop\'s list is found and added to it (glpk.js)', () => {
    const k = 6;
    const s = towns(2000, 2006, true);
    const centres = solveZones(s, { zones: k, seed: 1, restarts: 1 }).centres;
    const { bounds } = zoneBounds({ balance: 0.04 }, k, s.demand, null);
    const lp = solveLimitLp(s.units, s.demand, centres, bounds, null, { candidates: 2 });
    const ref = glpkOptimum(s.units, s.demand, centres, bounds);
    expect(ref.status).toBe(glpk.GLP_OPT);
    expect(lp.blocked).toBe(false);
    // Both within 1e-6 of glpk.js' optimum: the flow did not stop at its first candidate lists.
    expect(rel(lp.lpObjectiveKm2, ref.z)).toBeLessThan(1e-6);
    expect(rel(lp.lowerBoundKm2, ref.z)).toBeLessThan(1e-6);
  });

  it('large zones (over 1000 stops each): the whole-stop plan meets the band after the tightened second flow, the LP exact (glpk.js)', () => {
    const k = 4;
    const s = towns(6000, 6004, true);
    const centres = solveZones(s, { zones: k, seed: 1, restarts: 1 }).centres;
    const { bounds } = zoneBounds({ balance: 0.01 }, k, s.demand, null);
    const r = assignWithLimits(s.units, s.demand, centres, bounds, null);
    const ref = glpkOptimum(s.units, s.demand, centres, bounds);
    expect(ref.status).toBe(glpk.GLP_OPT);
    expect(rel(r.lpObjectiveKm2, ref.z)).toBeLessThan(1e-6);
    expect(rel(r.lowerBoundKm2, ref.z)).toBeLessThan(1e-6);
    expect(r.feasible).toBe(true);
    expectWithin(s.demand, r, bounds);
    expect(r.objectiveKm2).toBeGreaterThanOrEqual(ref.z * (1 - 1e-9));
    // Tightening costs little: within 1% of the LP optimum (common practice, no source).
    expect(r.gap).toBeLessThan(0.01);
  });

  it('per-zone capacities with locked stops (locked x fixed in the LP)', () => {
    const k = 5;
    const s = towns(1500, 77, true);
    const total = s.demand.reduce((a, w) => a + w, 0);
    const centres = solveZones(s, { zones: k, seed: 2, restarts: 1 }).centres;
    const rng = new Random(5, 1);
    const locked = new Int32Array(s.demand.length).fill(-1);
    for (let t = 0; t < 60; t++) locked[rng.nextInt(locked.length)] = rng.nextInt(k);
    const capacity = [0.26, 0.18, 0.22, 0.2, 0.2].map((f) => Math.ceil(total * f * 1.02));
    const { bounds } = zoneBounds({ capacity }, k, s.demand, locked);
    const r = assignWithLimits(s.units, s.demand, centres, bounds, locked);
    // Reference: glpk.js (GNU Linear Programming Kit).
    const ref = glpkOptimum(s.units, s.demand, centres, bounds, locked);
    expect(ref.status).toBe(glpk.GLP_OPT);
    expect(rel(r.lowerBoundKm2, ref.z)).toBeLessThan(1e-6);
    expect(rel(r.lpObjectiveKm2, ref.z)).toBeLessThan(1e-6);
    expect(r.objectiveKm2).toBeGreaterThanOrEqual(ref.z * (1 - 1e-9));
    for (let i = 0; i < locked.length; i++) if (locked[i]! >= 0) expect(r.assignment[i]).toBe(locked[i]);
    expect(r.feasible).toBe(true);
    expectWithin(s.demand, r, bounds);
  });

  it('demand and stop-count bounds together: the reported bound is still below the LP optimum (glpk.js)', () => {
    // The flow carries demand only and leaves stop counts to the repair, so its bound is the
    // LP without the stop-count rows: valid, but not the LP with both (see the report).
    const k = 6;
    const s = towns(2000, 2006, true);
    const total = s.demand.reduce((a, w) => a + w, 0);
    const centres = solveZones(s, { zones: k, seed: 1, restarts: 1 }).centres;
    const { bounds } = zoneBounds({ capacity: Math.ceil((total / k) * 1.03), maxStops: 350 }, k, s.demand, null);
    const lp = solveLimitLp(s.units, s.demand, centres, bounds, null);
    expect(lp.byDemand).toBe(true);
    const both = glpkOptimum(s.units, s.demand, centres, bounds);
    const demandOnly = glpkOptimum(s.units, s.demand, centres, { ...bounds, maxStops: new Float64Array(k).fill(Infinity) });
    expect(both.status).toBe(glpk.GLP_OPT);
    expect(demandOnly.status).toBe(glpk.GLP_OPT);
    expect(rel(lp.lowerBoundKm2, demandOnly.z)).toBeLessThan(1e-6);
    expect(lp.lowerBoundKm2).toBeLessThanOrEqual(both.z * (1 + 1e-9));
    const r = assignWithLimits(s.units, s.demand, centres, bounds, null);
    expect(r.feasible).toBe(true);
    expectWithin(s.demand, r, bounds);
    expect(r.objectiveKm2).toBeGreaterThanOrEqual(both.z * (1 - 1e-9));
  });
});
