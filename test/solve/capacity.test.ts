/**
 * The capacity-limited assignment step at fixed centres (assignWithLimits, solveLimitLp):
 * properties on random instances (fast-check) and a few exact small cases.
 * The LP optimum itself is checked against glpk.js in test/reference/lp-glpk.test.ts.
 */
import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { assignWithLimits, solveLimitLp, type LimitedAssignment, type ZoneBounds } from '../../src/solve/capacity.js';
import { angle2To } from '../../src/solve/candidates.js';
import { EARTH_RADIUS_KM } from '../../src/geo/constants.js';
import { zoneBounds, type LimitSettings } from '../../src/solve/limits.js';
import { unitFromLonLat } from '../../src/geo/unit.js';
import { Random } from '../../src/util/random.js';
import { stopsFromLonLat } from './support.js';

const R2 = EARTH_RADIUS_KM * EARTH_RADIUS_KM;

type Kind = 'capacity' | 'capacity-zones' | 'balance' | 'max-stops' | 'min-stops' | 'stops-band' | 'capacity+stops' | 'balance+capacity';

interface Params {
  readonly n: number;
  readonly k: number;
  readonly seed: number;
  readonly weights: 'unit' | 'small' | 'heavy' | 'zeros';
  readonly kind: Kind;
  readonly slack: number;
  readonly lockShare: number;
  /** Capacities without room for the largest stop: whole stops may not fit, violations must be exact. */
  readonly tight: boolean;
}

interface Instance {
  readonly units: Float64Array;
  readonly demand: Float64Array;
  readonly centres: Float64Array;
  readonly limits: LimitSettings;
  readonly locked: Int32Array | null;
}

/**
 * A random instance with settings that the LP can meet: a few towns, integer demand (so that
 * zone loads are exact sums), centres at random stops (far from the k-means ones, so that the
 * bounds bite), capacities or bands with `slack` over the mean plus room for the largest stop,
 * and a share of stops locked to random zones.
 */
function instance(p: Params): Instance {
  const rng = new Random(p.seed, 7);
  const towns = Array.from({ length: 1 + rng.nextInt(5) }, () => ({ lon: -3 + rng.next() * 6, lat: 50 + rng.next() * 4, sd: 0.01 + rng.next() * 0.3 }));
  const units = new Float64Array(3 * p.n);
  const demand = new Float64Array(p.n);
  for (let i = 0; i < p.n; i++) {
    if (i > 0 && rng.next() < 0.05) {
      // Some stops share a position (several deliveries at one address).
      const j = rng.nextInt(i);
      units.set(units.subarray(3 * j, 3 * j + 3), 3 * i);
      demand[i] = 1 + rng.nextInt(3);
      continue;
    }
    const t = towns[rng.nextInt(towns.length)]!;
    const r = Math.sqrt(-2 * Math.log(1 - rng.next()));
    const a = 2 * Math.PI * rng.next();
    units.set(unitFromLonLat(t.lon + t.sd * r * Math.cos(a) * 1.5, t.lat + t.sd * r * Math.sin(a)), 3 * i);
    demand[i] =
      p.weights === 'unit' ? 1 : p.weights === 'small' ? 1 + rng.nextInt(4) : p.weights === 'zeros' ? (rng.next() < 0.2 ? 0 : 1 + rng.nextInt(3)) : rng.next() < 0.1 ? 10 + rng.nextInt(30) : 1 + rng.nextInt(3);
  }
  if (demand.every((w) => w === 0)) demand[0] = 1;
  const centres = new Float64Array(3 * p.k);
  // Centres at k stops of distinct positions (two zones with one centre would tie everywhere).
  const picked = new Map<string, number>();
  while (picked.size < p.k) {
    const i = rng.nextInt(p.n);
    picked.set(units.subarray(3 * i, 3 * i + 3).join(','), i);
  }
  [...picked.values()].forEach((i, j) => centres.set(units.subarray(3 * i, 3 * i + 3), 3 * j));
  const total = demand.reduce((a, w) => a + w, 0);
  const largest = Math.max(...demand);
  const mean = total / p.k;
  const perStops = p.n / p.k;
  const room = p.tight ? 0 : largest;
  const cap = Math.max(largest, Math.ceil(mean * (1 + p.slack)) + room);
  const limits: { -readonly [K in keyof LimitSettings]: LimitSettings[K] } = {};
  switch (p.kind) {
    case 'capacity':
      limits.capacity = cap;
      break;
    case 'capacity-zones': {
      const f = Array.from({ length: p.k }, () => 0.5 + rng.next());
      const sum = f.reduce((a, b) => a + b, 0);
      limits.capacity = f.map((x) => Math.max(largest, Math.ceil((total * (1 + p.slack) * x) / sum) + room));
      break;
    }
    case 'balance':
      // At least wide enough above the mean for the largest stop (else zoneBounds refuses).
      limits.balance = Math.min(0.9, Math.max(0.02 + p.slack, largest / mean - 1 + 0.05));
      break;
    case 'max-stops':
      limits.maxStops = Math.ceil(perStops * (1 + p.slack)) + 1;
      break;
    case 'min-stops':
      limits.minStops = Math.floor(perStops * (1 - p.slack) * 0.9);
      break;
    case 'stops-band':
      limits.minStops = Math.floor(perStops * (1 - p.slack) * 0.9);
      limits.maxStops = Math.ceil(perStops * (1 + p.slack)) + 1;
      break;
    case 'capacity+stops':
      limits.capacity = cap;
      limits.maxStops = Math.ceil(perStops * (1 + p.slack)) + 2;
      break;
    case 'balance+capacity':
      limits.balance = Math.min(0.9, Math.max(0.03 + p.slack, largest / mean - 1 + 0.05));
      limits.capacity = Math.max(largest, Math.ceil(mean * (1 + p.slack / 2)) + room);
      break;
  }
  let locked: Int32Array | null = null;
  if (p.lockShare > 0) {
    locked = new Int32Array(p.n).fill(-1);
    const m = Math.floor(p.lockShare * p.n);
    // At most half a mean zone's demand and stops locked to any zone (so that locks fit every bound).
    const lockedD = new Float64Array(p.k);
    const lockedS = new Float64Array(p.k);
    for (let t = 0; t < m; t++) {
      const i = rng.nextInt(p.n);
      const z = rng.nextInt(p.k);
      if (locked[i]! >= 0 || lockedD[z]! + demand[i]! > mean / 2 || lockedS[z]! + 1 > perStops / 2) continue;
      locked[i] = z;
      lockedD[z]! += demand[i]!;
      lockedS[z]!++;
    }
  }
  return { units, demand, centres, limits, locked };
}

const params: fc.Arbitrary<Params> = fc.record({
  n: fc.integer({ min: 50, max: 400 }),
  k: fc.integer({ min: 2, max: 6 }),
  seed: fc.integer({ min: 1, max: 1_000_000 }),
  weights: fc.constantFrom('unit', 'small', 'heavy', 'zeros'),
  kind: fc.constantFrom<Kind>('capacity', 'capacity-zones', 'balance', 'max-stops', 'min-stops', 'stops-band', 'capacity+stops', 'balance+capacity'),
  slack: fc.double({ min: 0, max: 0.3, noNaN: true }),
  lockShare: fc.constantFrom(0, 0, 0.05, 0.15),
  tight: fc.boolean(),
});

/** The violations an assignment should report, recomputed from scratch (same tolerance rule). */
function expectedViolations(demand: Float64Array, assignment: Int32Array, b: ZoneBounds, locked: Int32Array | null): { zone: number; kind: string; load: number; bound: number; by: number }[] {
  const k = b.maxDemand.length;
  const d = new Array<number>(k).fill(0);
  const s = new Array<number>(k).fill(0);
  let freeTotal = 0;
  assignment.forEach((z, i) => {
    d[z]! += demand[i]!;
    s[z]!++;
    if (!(locked && locked[i]! >= 0)) freeTotal += demand[i]!;
  });
  // Demand sums are integers here, so exact; bounds like mean x 1.05 get 1e-9 of a mean zone.
  const tol = 1e-9 * Math.max(1e-300, freeTotal / k);
  const out: { zone: number; kind: string; load: number; bound: number; by: number }[] = [];
  for (let j = 0; j < k; j++) {
    if (d[j]! > b.maxDemand[j]! + tol) out.push({ zone: j, kind: 'over-demand', load: d[j]!, bound: b.maxDemand[j]!, by: d[j]! - b.maxDemand[j]! });
    if (d[j]! < b.minDemand[j]! - tol) out.push({ zone: j, kind: 'under-demand', load: d[j]!, bound: b.minDemand[j]!, by: b.minDemand[j]! - d[j]! });
    if (s[j]! > b.maxStops[j]!) out.push({ zone: j, kind: 'over-stops', load: s[j]!, bound: b.maxStops[j]!, by: s[j]! - b.maxStops[j]! });
    if (s[j]! < b.minStops[j]!) out.push({ zone: j, kind: 'under-stops', load: s[j]!, bound: b.minStops[j]!, by: b.minStops[j]! - s[j]! });
  }
  return out;
}

function objective(units: Float64Array, demand: Float64Array, centres: Float64Array, assignment: Int32Array): number {
  let sum = 0;
  for (let i = 0; i < demand.length; i++) sum += demand[i]! * angle2To(units, i, centres, assignment[i]!);
  return sum * R2;
}

function checkAssignment(inst: Instance, b: ZoneBounds, r: LimitedAssignment): void {
  const { units, demand, centres, locked } = inst;
  const n = demand.length;
  const k = centres.length / 3;
  // Every stop in exactly one zone 0..K-1.
  expect(r.assignment).toHaveLength(n);
  for (const z of r.assignment) expect(Number.isInteger(z) && z >= 0 && z < k).toBe(true);
  // Locked stops stay.
  if (locked) for (let i = 0; i < n; i++) if (locked[i]! >= 0) expect(r.assignment[i]).toBe(locked[i]);
  // Violations: exactly the broken bounds, with their loads and amounts.
  const expected = expectedViolations(demand, r.assignment, b, locked);
  expect(r.violations.map((v) => `${v.zone}:${v.kind}`)).toEqual(expected.map((v) => `${v.zone}:${v.kind}`));
  r.violations.forEach((v, t) => {
    const e = expected[t]!;
    expect(v.load).toBeCloseTo(e.load, 9);
    expect(v.bound).toBe(e.bound);
    expect(v.by).toBeCloseTo(e.by, 9);
    expect(v.by).toBeGreaterThan(0);
  });
  expect(r.feasible).toBe(expected.length === 0);
  // The objective is the assignment's, recomputed.
  const obj = objective(units, demand, centres, r.assignment);
  expect(Math.abs(r.objectiveKm2 - obj)).toBeLessThanOrEqual(1e-9 * Math.max(obj, 1e-300));
  // Weak duality: dual bound <= LP objective; the LP is solved exactly, so they agree.
  expect(r.lowerBoundKm2).toBeLessThanOrEqual(r.lpObjectiveKm2 * (1 + 1e-9) + 1e-9);
  expect(Math.abs(r.lpObjectiveKm2 - r.lowerBoundKm2)).toBeLessThanOrEqual(1e-7 * Math.max(r.lpObjectiveKm2, 1e-6));
  if (r.feasible) {
    // Whole stops within the bounds never beat the LP bound; the gap is as defined.
    expect(r.objectiveKm2).toBeGreaterThanOrEqual(r.lowerBoundKm2 * (1 - 1e-9) - 1e-9);
    const gap = r.objectiveKm2 > 0 ? (r.objectiveKm2 - r.lowerBoundKm2) / r.objectiveKm2 : 0;
    expect(Math.abs(r.gap - Math.max(0, gap))).toBeLessThan(1e-12);
    expect(r.gap).toBeGreaterThanOrEqual(0);
  }
}

describe('assignWithLimits on random instances (fast-check)', () => {
  it('assignment, locks, violations, objective and bounds are consistent', () => {
    let feasible = 0;
    let runs = 0;
    fc.assert(
      fc.property(params, (p) => {
        const inst = instance(p);
        const { bounds } = zoneBounds(inst.limits, p.k, inst.demand, inst.locked);
        const r = assignWithLimits(inst.units, inst.demand, inst.centres, bounds, inst.locked);
        checkAssignment(inst, bounds, r);
        runs++;
        if (r.feasible) feasible++;
      }),
      { numRuns: 60, seed: 20240611 },
    );
    // Not vacuous: most instances end within their bounds.
    expect(feasible).toBeGreaterThan(runs / 2);
  });

  it("the LP solution is a fractional assignment within the bounds, and its objective is the pieces' cost", () => {
    fc.assert(
      fc.property(params, (p) => {
        const inst = instance(p);
        const { units, demand, centres, locked } = inst;
        const k = p.k;
        const { bounds } = zoneBounds(inst.limits, k, demand, locked);
        const lp = solveLimitLp(units, demand, centres, bounds, locked);
        expect(lp.blocked).toBe(false);
        const share = new Float64Array(demand.length);
        const loadD = Float64Array.from(lp.lockedDemand);
        const loadS = Float64Array.from(lp.lockedStops);
        let cost = 0;
        lp.flow.forEachPiece((i, z, x) => {
          expect(x).toBeGreaterThan(0);
          expect(locked && locked[i]! >= 0).toBeFalsy();
          share[i]! += x;
          loadD[z]! += x * demand[i]!;
          loadS[z]! += x;
          cost += x * demand[i]! * angle2To(units, i, centres, z);
        });
        for (let i = 0; i < demand.length; i++) {
          if (locked && locked[i]! >= 0) continue;
          // Stops of demand 0 are not carried when the flow carries demand (they cost nothing).
          if (lp.byDemand && demand[i] === 0) expect(share[i]).toBe(0);
          else expect(share[i]!).toBeCloseTo(1, 9);
        }
        const total = demand.reduce((a, w) => a + w, 0);
        const tolD = 1e-7 * (total / k);
        for (let j = 0; j < k; j++) {
          if (lp.byDemand) {
            expect(loadD[j]!).toBeLessThanOrEqual(bounds.maxDemand[j]! + tolD);
            expect(loadD[j]!).toBeGreaterThanOrEqual(bounds.minDemand[j]! - tolD);
          } else {
            expect(loadS[j]!).toBeLessThanOrEqual(bounds.maxStops[j]! + 1e-7);
            expect(loadS[j]!).toBeGreaterThanOrEqual(bounds.minStops[j]! - 1e-7);
          }
        }
        // An optimal vertex of the LP splits at most K-1 stops (its support is a forest: substitute
        // y_ij = w_i x_ij and the LP is a transportation problem). Stops at one position are
        // interchangeable, so count split positions.
        const splitAt = new Map<number, number>();
        lp.flow.forEachPiece((i) => splitAt.set(i, (splitAt.get(i) ?? 0) + 1));
        const positions = new Set([...splitAt].filter(([, c]) => c > 1).map(([i]) => units.subarray(3 * i, 3 * i + 3).join(',')));
        expect(positions.size).toBeLessThanOrEqual(k - 1);
        const lockedCost = locked ? demand.reduce((a, w, i) => (locked[i]! >= 0 ? a + w * angle2To(units, i, centres, locked[i]!) : a), 0) : 0;
        expect(lp.lpObjectiveKm2).toBeCloseTo((cost + lockedCost) * R2, 6);
        expect(lp.lowerBoundKm2).toBeLessThanOrEqual(lp.lpObjectiveKm2 * (1 + 1e-9) + 1e-9);
        // Flow carries stop counts only when no demand bound is set.
        const demandBounded = bounds.maxDemand.some((x) => Number.isFinite(x)) || bounds.minDemand.some((x) => x > 0);
        expect(lp.byDemand).toBe(demandBounded || !(bounds.maxStops.some((x) => Number.isFinite(x)) || bounds.minStops.some((x) => x > 0)));
      }),
      { numRuns: 40, seed: 7 },
    );
  });
});

describe('assignWithLimits on small exact cases', () => {
  // Stops on the equator at 0, 1, 2, 10, 11, 12 degrees; centres at 1 and 11.
  const line = stopsFromLonLat([[0, 0], [1, 0], [2, 0], [10, 0], [11, 0], [12, 0]]);
  const centres = new Float64Array([...unitFromLonLat(1, 0), ...unitFromLonLat(11, 0)]);
  const rad = Math.PI / 180;
  const none = (k: number): ZoneBounds => ({ maxDemand: new Float64Array(k).fill(Infinity), minDemand: new Float64Array(k), maxStops: new Float64Array(k).fill(Infinity), minStops: new Float64Array(k) });

  it('without bounds, every stop goes to its nearest centre', () => {
    const r = assignWithLimits(line.units, line.demand, centres, none(2), null);
    expect([...r.assignment]).toEqual([0, 0, 0, 1, 1, 1]);
    // 4 stops 1 degree away, 2 at the centres.
    expect(r.objectiveKm2).toBeCloseTo(4 * (rad * EARTH_RADIUS_KM) ** 2, 6);
    expect(r.lowerBoundKm2).toBeCloseTo(r.objectiveKm2, 6);
    expect(r.split).toBe(0);
    expect(r.feasible).toBe(true);
  });

  it('a capacity of 2 stops pushes the stop nearest the other zone across', () => {
    const b = none(2);
    b.maxDemand[0] = 2;
    const r = assignWithLimits(line.units, line.demand, centres, b, null);
    // Stop at 2 deg moves to the centre at 11 (9 deg) rather than the one at 0 (11 deg).
    expect([...r.assignment]).toEqual([0, 0, 1, 1, 1, 1]);
    expect(r.objectiveKm2).toBeCloseTo((1 + 0 + 81 + 1 + 0 + 1) * (rad * EARTH_RADIUS_KM) ** 2, 4);
    expect(r.lowerBoundKm2).toBeCloseTo(r.objectiveKm2, 4);
    expect(r.feasible).toBe(true);
    expect(r.prices.demand[0]).toBeGreaterThan(0);
  });

  it('a heavy stop the LP splits is rounded and the bound repaired by the cheapest move', () => {
    // Demand 1, 1, 4 at 0, 1, 2 deg (centre 0 at 1 deg), 1 at 11 deg (centre 1); capacities 5 and 4.
    // LP: a quarter of the 4 goes across (80 deg^2 per unit, cheaper than 120 for the stop at 0):
    // 1 + 0 + 3 x 1 + 1 x 81 + 0 = 85 deg^2. Whole stops: the 4 cannot cross (5 > 4) nor stay
    // with both 1s (6 > 5); cheapest fix moves the stop at 1 deg across (+100): 1 + 100 + 4 = 105.
    const s = stopsFromLonLat([[0, 0], [1, 0], [2, 0], [11, 0]], [1, 1, 4, 1]);
    const b = none(2);
    b.maxDemand[0] = 5;
    b.maxDemand[1] = 4;
    const r = assignWithLimits(s.units, s.demand, centres, b, null);
    const deg2 = (rad * EARTH_RADIUS_KM) ** 2;
    expect(r.split).toBe(1);
    expect(r.lpObjectiveKm2 / deg2).toBeCloseTo(85, 6);
    expect(r.lowerBoundKm2 / deg2).toBeCloseTo(85, 6);
    expect([...r.assignment]).toEqual([0, 1, 0, 1]);
    expect(r.objectiveKm2 / deg2).toBeCloseTo(105, 6);
    expect(r.feasible).toBe(true);
    expect(r.gap).toBeCloseTo(20 / 105, 9);
  });

  it('an impossible whole-stop packing is reported with the exact breach', () => {
    // Three stops of demand 3, capacities 4 and 5: the LP fits 9 exactly, whole stops cannot; the
    // least breach is 6 in the zone of capacity 5 (by 1) rather than 6 in the one of 4 (by 2).
    const s = stopsFromLonLat([[0, 0], [1, 0], [11, 0]], [3, 3, 3]);
    const b = none(2);
    b.maxDemand[0] = 4;
    b.maxDemand[1] = 5;
    const r = assignWithLimits(s.units, s.demand, centres, b, null);
    expect(r.feasible).toBe(false);
    expect(r.violations).toEqual([{ zone: 1, kind: 'over-demand', load: 6, bound: 5, by: 1 }]);
    const d = [0, 0];
    r.assignment.forEach((z, i) => (d[z]! += s.demand[i]!));
    expect(d).toEqual([3, 6]);
    // Not clamped when bounds are broken: the plain formula.
    expect(r.gap).toBeCloseTo((r.objectiveKm2 - r.lowerBoundKm2) / r.objectiveKm2, 12);
  });

  it('locked stops stay even where another zone is nearer, and count against their zone', () => {
    const locked = Int32Array.from([1, -1, -1, -1, -1, 0]);
    const b = none(2);
    b.maxDemand[1] = 3;
    const r = assignWithLimits(line.units, line.demand, centres, b, locked);
    expect(r.assignment[0]).toBe(1);
    expect(r.assignment[5]).toBe(0);
    const d = [0, 0];
    r.assignment.forEach((z, i) => (d[z]! += line.demand[i]!));
    expect(d[1]).toBeLessThanOrEqual(3);
    expect(r.feasible).toBe(true);
    expect(r.objectiveKm2).toBeCloseTo(objective(line.units, line.demand, centres, r.assignment), 6);
  });
});
