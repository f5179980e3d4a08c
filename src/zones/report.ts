import { lonLatBox } from '../geo/bbox.js';
import { planFigures, type ZoneFigures } from './stats.js';
import type { Boundaries } from './boundaries.js';

/** Everything known about one zone. Distances are great-circle km, not road distances. */
export interface ZoneStatistics extends ZoneFigures {
  /** Share of the plan's total demand. */
  readonly share: number;
  /** Demand over the zone's capacity (upper demand bound), when it has one. */
  readonly utilisation: number | null;
  /** Distances of its stops to the centre: median and 90th percentile (nearest rank, unweighted). */
  readonly medianKm: number;
  readonly p90Km: number;
  /** Spread: root of the demand-weighted mean squared km to the centre (plain mean at demand 0). */
  readonly rmsKm: number;
  /** Territory area (km^2) and compactness (Polsby-Popper: 4 pi area / perimeter^2; 1 for a disc). */
  readonly areaKm2: number | null;
  readonly compactness: number | null;
  /** Bounding box of its stops, [west, south, east, north]; null for an empty zone. */
  readonly bbox: [number, number, number, number] | null;
}

export interface PlanStatistics {
  readonly zones: ZoneStatistics[];
  readonly stopKm: Float64Array;
  readonly objectiveKm2: number;
  readonly totalDemand: number;
  /** Largest zone demand over the smallest (Infinity with an empty zone), and the coefficient of variation. */
  readonly maxMinRatio: number;
  readonly demandCv: number;
  /**
   * Stops not inside their own zone's polygon (counted only with boundaries): those in another
   * zone's territory (Boundaries.outside) and those outside the service area altogether
   * (Boundaries.beyondArea), each once.
   */
  readonly outsideOwnZone: number;
  /** The stops counted in outsideOwnZone, by stop index in ascending order (empty without boundaries). */
  readonly outsideOwnZoneStops: Int32Array;
}

/** Stops not inside their own zone's polygon: the union of outside and beyondArea, ascending. */
function notInOwnZone(boundaries: Boundaries, n: number): Int32Array {
  const mark = new Uint8Array(n);
  for (const i of boundaries.outside) mark[i] = 1;
  for (const i of boundaries.beyondArea) mark[i] = 1;
  const out: number[] = [];
  for (let i = 0; i < n; i++) if (mark[i]) out.push(i);
  return Int32Array.from(out);
}

/** Nearest-rank percentile of sorted values (p in 0..1). */
function percentile(sorted: Float64Array, p: number): number {
  if (sorted.length === 0) return 0;
  const rank = Math.max(1, Math.ceil(p * sorted.length));
  return sorted[rank - 1]!;
}

/**
 * Zone statistics of a plan: the per-zone figures (src/zones/stats.ts) plus share, utilisation,
 * median / 90th percentile / RMS km, area, compactness and bounding box; plan-wide workload
 * spread and the stops not inside their own zone's polygon. Pure.
 */
export function planStatistics(
  units: Float64Array,
  demand: Float64Array,
  lonLat: Float64Array,
  centres: Float64Array,
  assignment: Int32Array,
  boundaries: Boundaries | null,
  maxDemand: Float64Array | null,
): PlanStatistics {
  const base = planFigures(units, demand, centres, assignment);
  const k = base.zones.length;
  const n = demand.length;
  // Distances and positions per zone (counting sort by zone).
  const start = new Int32Array(k + 1);
  for (let i = 0; i < n; i++) start[assignment[i]! + 1]!++;
  for (let j = 0; j < k; j++) start[j + 1]! += start[j]!;
  const fill = start.slice(0, k);
  const order = new Int32Array(n);
  for (let i = 0; i < n; i++) order[fill[assignment[i]!]!++] = i;
  const zones: ZoneStatistics[] = base.zones.map((z, j) => {
    const from = start[j]!;
    const to = start[j + 1]!;
    const km = new Float64Array(to - from);
    const ll = new Float64Array(2 * (to - from));
    let sw = 0;
    let swk2 = 0;
    let sk2 = 0;
    for (let t = from; t < to; t++) {
      const i = order[t]!;
      const d = base.stopKm[i]!;
      km[t - from] = d;
      ll[2 * (t - from)] = lonLat[2 * i]!;
      ll[2 * (t - from) + 1] = lonLat[2 * i + 1]!;
      sw += demand[i]!;
      swk2 += demand[i]! * d * d;
      sk2 += d * d;
    }
    km.sort();
    const rms = sw > 0 ? Math.sqrt(swk2 / sw) : km.length > 0 ? Math.sqrt(sk2 / km.length) : 0;
    const area = boundaries ? boundaries.areaKm2[j]! : null;
    const perimeter = boundaries ? boundaries.perimeterKm[j]! : null;
    const cap = maxDemand && Number.isFinite(maxDemand[j]!) ? maxDemand[j]! : null;
    return {
      ...z,
      share: base.totalDemand > 0 ? z.demand / base.totalDemand : 0,
      utilisation: cap !== null && cap > 0 ? z.demand / cap : null,
      medianKm: percentile(km, 0.5),
      p90Km: percentile(km, 0.9),
      rmsKm: rms,
      areaKm2: area,
      compactness: area !== null && perimeter !== null && perimeter > 0 ? (4 * Math.PI * area) / (perimeter * perimeter) : null,
      bbox: km.length > 0 ? lonLatBox(ll) : null,
    };
  });
  const demands = zones.map((z) => z.demand);
  const mean = base.totalDemand / Math.max(1, k);
  let ss = 0;
  for (const d of demands) ss += (d - mean) ** 2;
  const min = Math.min(...demands);
  const notInOwn = boundaries ? notInOwnZone(boundaries, n) : new Int32Array(0);
  return {
    zones,
    stopKm: base.stopKm,
    objectiveKm2: base.objectiveKm2,
    totalDemand: base.totalDemand,
    maxMinRatio: min > 0 ? Math.max(...demands) / min : Infinity,
    demandCv: mean > 0 ? Math.sqrt(ss / Math.max(1, k)) / mean : 0,
    outsideOwnZone: notInOwn.length,
    outsideOwnZoneStops: notInOwn,
  };
}
