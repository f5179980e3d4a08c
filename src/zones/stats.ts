import { EARTH_RADIUS_KM } from '../geo/constants.js';
import { angleFromChord } from '../geo/distance.js';
import { lonLatFromVector } from '../geo/unit.js';

/** Figures of one zone. Distances are great-circle km to the zone's centre: straight lines, not drive times. */
export interface ZoneFigures {
  /** Zone index, 0-based (shown 1-based to people). */
  readonly zone: number;
  readonly centreLon: number;
  readonly centreLat: number;
  readonly stops: number;
  readonly demand: number;
  /** Demand-weighted mean km to the centre (plain mean where the zone's demand is 0). */
  readonly meanKm: number;
  readonly maxKm: number;
  /** Sum of demand x km^2: this zone's part of the objective. */
  readonly objectiveKm2: number;
}

export interface PlanFigures {
  readonly zones: ZoneFigures[];
  /** Great-circle km from every stop to its zone's centre. */
  readonly stopKm: Float64Array;
  readonly objectiveKm2: number;
  readonly totalDemand: number;
}

/**
 * Per-zone figures of an assignment: stops, demand, mean and max km to centre, objective.
 * Pure; `units` and `centres` are interleaved unit vectors, `assignment` holds 0-based zones.
 */
export function planFigures(units: Float64Array, demand: Float64Array, centres: Float64Array, assignment: Int32Array): PlanFigures {
  const n = demand.length;
  const k = centres.length / 3;
  const stops = new Int32Array(k);
  const sumW = new Float64Array(k);
  const sumWKm = new Float64Array(k);
  const sumKm = new Float64Array(k);
  const maxKm = new Float64Array(k);
  const obj = new Float64Array(k);
  const stopKm = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    const a = assignment[i]!;
    if (!(a >= 0 && a < k)) throw new RangeError(`stop ${i} is assigned to zone ${a}, outside 0..${k - 1}`);
    const dx = units[3 * i]! - centres[3 * a]!;
    const dy = units[3 * i + 1]! - centres[3 * a + 1]!;
    const dz = units[3 * i + 2]! - centres[3 * a + 2]!;
    const km = angleFromChord(Math.sqrt(dx * dx + dy * dy + dz * dz)) * EARTH_RADIUS_KM;
    const w = demand[i]!;
    stopKm[i] = km;
    stops[a]!++;
    sumW[a]! += w;
    sumWKm[a]! += w * km;
    sumKm[a]! += km;
    if (km > maxKm[a]!) maxKm[a] = km;
    obj[a]! += w * km * km;
  }
  const zones: ZoneFigures[] = [];
  let objective = 0;
  let total = 0;
  for (let j = 0; j < k; j++) {
    const [lon, lat] = lonLatFromVector(centres[3 * j]!, centres[3 * j + 1]!, centres[3 * j + 2]!);
    const mean = sumW[j]! > 0 ? sumWKm[j]! / sumW[j]! : stops[j]! > 0 ? sumKm[j]! / stops[j]! : 0;
    zones.push({ zone: j, centreLon: lon, centreLat: lat, stops: stops[j]!, demand: sumW[j]!, meanKm: mean, maxKm: maxKm[j]!, objectiveKm2: obj[j]! });
    objective += obj[j]!;
    total += sumW[j]!;
  }
  return { zones, stopKm, objectiveKm2: objective, totalDemand: total };
}
