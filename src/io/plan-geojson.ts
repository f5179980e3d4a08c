import type { Plan } from '../solve/plan.js';
import type { PlanFigures } from '../zones/stats.js';
import type { StopSet } from './stopset.js';
import { decimals, deg6, round } from './format.js';

/** What the file says about the plan as a whole (an RFC 7946 section 6.1 foreign member). */
export interface PlanSummary {
  readonly generator: string;
  readonly source: string;
  readonly zones: number;
  readonly stops: number;
  readonly totalDemand: number;
  readonly objectiveKm2: number;
  readonly iterations: number;
  readonly converged: boolean;
  readonly seed: number | null;
  /** With workload limits: the LP lower bound at the final centres, the gap to it, whether all bounds hold. */
  readonly limits: { readonly lowerBoundKm2: number; readonly gap: number; readonly feasible: boolean } | null;
  readonly distanceNote: string;
}

export const DISTANCE_NOTE = 'Distances are great-circle (straight-line) km on a sphere of radius 6371.0088 km, not road distances or drive times.';

/**
 * The plan as one RFC 7946 FeatureCollection, in chunks of text: one Point per zone centre
 * (role "centre") and one per stop (role "stop"), [longitude, latitude] with 6 decimals, no
 * "crs" member. Zone polygons (role "zone") are added by the boundary step.
 */
export function* planGeoJsonChunks(stops: StopSet, plan: Plan, figures: PlanFigures, generator = 'zoneplan'): Generator<string> {
  const summary: PlanSummary = {
    generator,
    source: stops.source,
    zones: plan.zoneIds.length,
    stops: stops.ids.length,
    totalDemand: figures.totalDemand,
    objectiveKm2: round(plan.objectiveKm2, 3),
    iterations: plan.iterations,
    converged: plan.converged,
    seed: plan.settings.seed ?? null,
    limits: plan.limits ? { lowerBoundKm2: round(plan.limits.lowerBoundKm2, 3), gap: plan.limits.gap, feasible: plan.limits.feasible } : null,
    distanceNote: DISTANCE_NOTE,
  };
  yield `{"type":"FeatureCollection","plan":${JSON.stringify(summary)},"features":[\n`;
  let first = true;
  for (const z of figures.zones) {
    const max = plan.limits && Number.isFinite(plan.limits.bounds.maxDemand[z.zone]!) ? plan.limits.bounds.maxDemand[z.zone]! : null;
    const props = {
      role: 'centre',
      zone: plan.zoneIds[z.zone],
      ...(plan.zoneNames[z.zone] ? { name: plan.zoneNames[z.zone] } : {}),
      fixed: z.zone < plan.fixedZones,
      stops: z.stops,
      demand: z.demand,
      ...(max !== null ? { capacity: round(max, 6), utilisation: max > 0 ? round(z.demand / max, 4) : null } : {}),
      meanKm: round(z.meanKm, 3),
      maxKm: round(z.maxKm, 3),
    };
    yield `${first ? '' : ',\n'}{"type":"Feature","geometry":{"type":"Point","coordinates":[${deg6(z.centreLon)},${deg6(z.centreLat)}]},"properties":${JSON.stringify(props)}}`;
    first = false;
  }
  const { ids, lonLat, demand } = stops;
  const { assignment, locked } = plan;
  const km = figures.stopKm;
  let buffer = '';
  for (let i = 0; i < ids.length; i++) {
    buffer += `,\n{"type":"Feature","geometry":{"type":"Point","coordinates":[${deg6(lonLat[2 * i]!)},${deg6(lonLat[2 * i + 1]!)}]},"properties":{"role":"stop","id":${JSON.stringify(ids[i])},"zone":${plan.zoneIds[assignment[i]!]},"demand":${demand[i]},"km":${decimals(km[i]!, 3)}${locked && locked[i]! >= 0 ? ',"locked":true' : ''}}}`;
    if (buffer.length > 1 << 20) {
      yield buffer;
      buffer = '';
    }
  }
  yield `${buffer}\n]}\n`;
}
