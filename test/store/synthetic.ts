/**
 * Deterministic stop sets and plans for the store tests: the same numbers give the same arrays,
 * so a test (or the SIGKILL child) can make them again and compare what was loaded bit for bit.
 */
import type { SolvedPlan } from '../../src/api/plan-file.js';
import { unitsFromLonLat } from '../../src/geo/unit.js';
import type { Problem } from '../../src/io/problems.js';
import type { StopSet } from '../../src/io/stopset.js';
import type { LimitsReport } from '../../src/solve/limited.js';
import type { Plan } from '../../src/solve/plan.js';
import { Random } from '../../src/util/random.js';
import { planFigures, type PlanFigures } from '../../src/zones/stats.js';

export function syntheticStops(n: number, variant: number, extra: { warnings?: Problem[]; ids?: string[]; source?: string } = {}): StopSet {
  const rng = new Random(1000 + variant, 7);
  const lonLat = new Float64Array(2 * n);
  const demand = new Float64Array(n);
  const rows = new Int32Array(n);
  const ids: string[] = extra.ids ?? [];
  for (let i = 0; i < n; i++) {
    lonLat[2 * i] = 9 + 4 * rng.next();
    lonLat[2 * i + 1] = 47 + 3 * rng.next();
    demand[i] = 1 + rng.nextInt(9) + (variant % 7) / 8;
    rows[i] = i + 2;
    if (!extra.ids) ids.push(`S-${variant}-${i}`);
  }
  return {
    source: extra.source ?? `synthetic-${variant}.csv`,
    format: 'csv',
    ids,
    lonLat,
    units: unitsFromLonLat(lonLat),
    demand,
    rows,
    fields: { id: 'id', lon: 'lon', lat: 'lat', demand: 'demand' },
    warnings: extra.warnings ?? [],
  };
}

/** A plan of k zones over the stops, its arrays made from `variant`; limits and locks on request. */
export function syntheticPlan(stops: StopSet, k: number, variant: number, options: { limits?: boolean; locked?: boolean; fixedZones?: number } = {}): Plan {
  const n = stops.ids.length;
  const rng = new Random(5000 + variant, 3);
  const centres = new Float64Array(3 * k);
  for (let j = 0; j < k; j++) centres.set(stops.units.subarray(3 * ((j * 7919 + variant) % n), 3 * ((j * 7919 + variant) % n) + 3), 3 * j);
  const assignment = new Int32Array(n);
  for (let i = 0; i < n; i++) assignment[i] = rng.nextInt(k);
  let locked: Int32Array | null = null;
  if (options.locked) {
    locked = new Int32Array(n).fill(-1);
    for (let i = variant % 5; i < n; i += 11) locked[i] = assignment[i]!;
  }
  const limits: LimitsReport | null = options.limits
    ? {
        bounds: {
          maxDemand: Float64Array.from({ length: k }, (_, j) => (j === 0 ? Infinity : 500 + j + variant / 3)),
          minDemand: Float64Array.from({ length: k }, (_, j) => (j === 1 ? -0 : 100.125 * j)),
          maxStops: new Float64Array(k).fill(Infinity),
          minStops: new Float64Array(k),
        },
        lpObjectiveKm2: 1234.5678901234567 + variant,
        lowerBoundKm2: 1200.0000000000002,
        gap: Number.NaN,
        feasible: variant % 2 === 0,
        violations: [{ zone: 1, kind: 'over-demand', load: 612.5, bound: 501 + variant / 3, by: 111.5 - variant / 3 }],
        split: 3,
        repaired: 1,
        blocked: false,
        notes: [{ code: 'band-narrow', message: 'a note with "quotes", ±, and a line\nbreak' }],
      }
    : null;
  return {
    zoneIds: Array.from({ length: k }, (_, j) => j + 1),
    zoneNames: Array.from({ length: k }, (_, j) => (j < (options.fixedZones ?? 0) ? `DEPOT-${j}` : null)),
    centres,
    assignment,
    objectiveKm2: 98765.4321 + variant / 7,
    iterations: 10 + variant,
    converged: variant % 3 !== 0,
    settings: { zones: k, seed: variant, restarts: 2, centre: 'arc', maxIterations: 300 },
    fixedZones: options.fixedZones ?? 0,
    locked,
    limits,
    limitSettings: options.limits ? { capacity: Array.from({ length: k }, (_, j) => (j === 0 ? Infinity : 500 + j)), balance: 0.05, minStops: 3 } : null,
  };
}

export function figuresOf(stops: StopSet, plan: Plan): PlanFigures {
  return planFigures(stops.units, stops.demand, plan.centres, plan.assignment);
}

/** What the SIGKILL child saves as plan number i: its own stops (so every save writes a stop set too). */
export function crashCase(i: number): { name: string; stops: StopSet; plan: Plan } {
  const stops = syntheticStops(20_000, i);
  return { name: `plan-${i}`, stops, plan: syntheticPlan(stops, 8 + (i % 5), i, { limits: i % 2 === 0, locked: i % 3 === 0 }) };
}

/** A SolvedPlan around a synthetic plan (the run figures made up, but fixed). */
export function solvedOf(stops: StopSet, plan: Plan): SolvedPlan {
  return {
    stops,
    plan,
    figures: figuresOf(stops, plan),
    result: {
      zones: plan.zoneIds.length,
      centres: plan.centres,
      assignment: plan.assignment,
      objectiveKm2: plan.objectiveKm2,
      iterations: plan.iterations,
      converged: plan.converged,
      bestRestart: 1,
      restartObjectivesKm2: [plan.objectiveKm2 * 1.01, plan.objectiveKm2, Infinity],
      startStops: stops.ids.length,
      seed: plan.settings.seed ?? 1,
      reseeded: 2,
      history: [],
      distanceEvaluations: 12345,
      naiveDistanceEvaluations: 67890,
    },
  };
}
