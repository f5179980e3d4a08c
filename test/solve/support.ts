/**
 * Helpers shared by the engine tests (not a test file itself: vitest only runs *.test.ts).
 */
import { unitFromLonLat } from '../../src/geo/unit.js';
import { EARTH_RADIUS_KM } from '../../src/geo/constants.js';
import type { SolveInput, SolveResult } from '../../src/solve/types.js';

/** Stops from [lon, lat] pairs in degrees; demand 1 each unless given. */
export function stopsFromLonLat(points: readonly (readonly [number, number])[], demand?: readonly number[]): SolveInput {
  const units = new Float64Array(3 * points.length);
  points.forEach(([lon, lat], i) => units.set(unitFromLonLat(lon, lat), 3 * i));
  const w = demand ? Float64Array.from(demand) : new Float64Array(points.length).fill(1);
  return { units, demand: w };
}

export function dot(a: Float64Array, i: number, b: Float64Array, j: number): number {
  return a[3 * i]! * b[3 * j]! + a[3 * i + 1]! * b[3 * j + 1]! + a[3 * i + 2]! * b[3 * j + 2]!;
}

/**
 * Stops whose zone is not their nearest centre by a brute-force scan (largest dot product),
 * allowing `tolerance` in the dot product for ties and rounding. Returns their indices.
 */
export function notNearest(units: Float64Array, centres: Float64Array, assignment: Int32Array, tolerance = 1e-13): number[] {
  const n = units.length / 3;
  const k = centres.length / 3;
  const wrong: number[] = [];
  for (let i = 0; i < n; i++) {
    let best = -Infinity;
    for (let j = 0; j < k; j++) best = Math.max(best, dot(units, i, centres, j));
    if (dot(units, i, centres, assignment[i]!) < best - tolerance) wrong.push(i);
  }
  return wrong;
}

/** Stops per zone; throws if a zone index is out of range. */
export function zoneCounts(assignment: Int32Array, k: number): number[] {
  const counts = new Array<number>(k).fill(0);
  for (const a of assignment) {
    if (!(Number.isInteger(a) && a >= 0 && a < k)) throw new RangeError(`zone ${a} outside 0..${k - 1}`);
    counts[a]!++;
  }
  return counts;
}

/**
 * Steps where a history quantity rose: in phase 'mean' phaseObjectiveKm2 from one iteration to
 * the next of the same start on the same stops; in phase 'arc' objectiveKm2.
 *
 * Allowed slack: `relTol` of the value, plus an absolute floor for 'mean', whose value comes from
 * zone sums as 2 R^2 sum_zones (W - c . S): that difference cancels, so its rounding is a few
 * times 2.2e-16 x W x R^2 whatever the objective (measured up to about 9 times on random sets).
 * For compact zones this floor is far above 1e-9 relative: 100 stops 100 m from their centres
 * have an objective of 1 km^2, against a floor of about 1e-6 km^2 per 100 units of demand.
 */
export function historyRises(result: SolveResult, totalDemand: number, relTol = 1e-9): string[] {
  const rises: string[] = [];
  const floor = 64 * 2.220446049250313e-16 * totalDemand * EARTH_RADIUS_KM * EARTH_RADIUS_KM;
  const h = result.history;
  for (let t = 1; t < h.length; t++) {
    const p = h[t - 1]!;
    const c = h[t]!;
    if (p.restart !== c.restart || p.stops !== c.stops || p.phase !== c.phase || c.iteration !== p.iteration + 1) continue;
    const before = c.phase === 'arc' ? p.objectiveKm2! : p.phaseObjectiveKm2;
    const after = c.phase === 'arc' ? c.objectiveKm2! : c.phaseObjectiveKm2;
    if (after > before + relTol * Math.abs(before) + (c.phase === 'mean' ? floor : 0)) {
      rises.push(`restart ${c.restart} ${c.phase} iteration ${c.iteration} on ${c.stops} stops: ${before} -> ${after}`);
    }
  }
  return rises;
}

export function totalDemand(input: SolveInput): number {
  let s = 0;
  for (const w of input.demand) s += w;
  return s;
}

/** Number of pairs of consecutive records a history check actually compared (so that it is not vacuous). */
export function comparedSteps(result: SolveResult, phase: 'mean' | 'arc'): number {
  let n = 0;
  const h = result.history;
  for (let t = 1; t < h.length; t++) {
    const p = h[t - 1]!;
    const c = h[t]!;
    if (p.restart === c.restart && p.stops === c.stops && p.phase === phase && c.phase === phase && c.iteration === p.iteration + 1) n++;
  }
  return n;
}
