import rewind from '@mapbox/geojson-rewind';
import type { Geometry, MultiPolygon, Polygon, Position } from 'geojson';
import type { Plan } from '../solve/plan.js';
import type { Boundaries } from '../zones/boundaries.js';
import type { PlanStatistics } from '../zones/report.js';
import type { StopSet } from './stopset.js';
import { decimals, deg6, round } from './format.js';
import { zoneProperties } from './zone-properties.js';

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
  /** Workload spread and the stops outside their zone's territory. */
  readonly maxMinRatio: number | null;
  readonly demandCv: number;
  readonly stopsOutsideOwnZone: number | null;
  readonly distanceNote: string;
}

export const DISTANCE_NOTE = 'Distances are great-circle (straight-line) km on a sphere of radius 6371.0088 km, not road distances or drive times.';

/** A plan with its statistics and (when drawn) zone boundaries: what the writers need. */
export interface PlanLayers {
  readonly stops: StopSet;
  readonly plan: Plan;
  readonly stats: PlanStatistics;
  readonly boundaries: Boundaries | null;
}

function summary(l: PlanLayers, generator: string): PlanSummary {
  const { plan, stats, stops } = l;
  return {
    generator,
    source: stops.source,
    zones: plan.zoneIds.length,
    stops: stops.ids.length,
    totalDemand: stats.totalDemand,
    objectiveKm2: round(stats.objectiveKm2, 3),
    iterations: plan.iterations,
    converged: plan.converged,
    seed: plan.settings.seed ?? null,
    limits: plan.limits ? { lowerBoundKm2: round(plan.limits.lowerBoundKm2, 3), gap: plan.limits.gap, feasible: plan.limits.feasible } : null,
    maxMinRatio: Number.isFinite(stats.maxMinRatio) ? round(stats.maxMinRatio, 6) : null,
    demandCv: round(stats.demandCv, 6),
    stopsOutsideOwnZone: l.boundaries ? stats.outsideOwnZone : null,
    distanceNote: DISTANCE_NOTE,
  };
}

function positionsJson(ring: Position[]): string {
  return `[${ring.map((p) => `[${deg6(p[0]!)},${deg6(p[1]!)}]`).join(',')}]`;
}

/** Geometry JSON text, 6 decimals, rings wound per RFC 7946 section 3.1.6 (exterior counter-clockwise). */
export function geometryJson(g: Polygon | MultiPolygon): string {
  const wound = rewind(structuredClone(g) as Geometry, false) as Polygon | MultiPolygon;
  if (wound.type === 'Polygon') return `{"type":"Polygon","coordinates":[${wound.coordinates.map(positionsJson).join(',')}]}`;
  return `{"type":"MultiPolygon","coordinates":[${wound.coordinates.map((rings) => `[${rings.map(positionsJson).join(',')}]`).join(',')}]}`;
}

function* zoneFeatures(l: PlanLayers, role: boolean): Generator<string> {
  if (!l.boundaries) return;
  for (const z of l.stats.zones) {
    const g = l.boundaries.zones[z.zone];
    const props = { ...(role ? { role: 'zone' } : {}), ...zoneProperties(l.plan, z) };
    yield `{"type":"Feature","geometry":${g ? geometryJson(g) : 'null'},"properties":${JSON.stringify(props)}}`;
  }
}

function* centreFeatures(l: PlanLayers, role: boolean): Generator<string> {
  for (const z of l.stats.zones) {
    const props = { ...(role ? { role: 'centre' } : {}), ...zoneProperties(l.plan, z) };
    yield `{"type":"Feature","geometry":{"type":"Point","coordinates":[${deg6(z.centreLon)},${deg6(z.centreLat)}]},"properties":${JSON.stringify(props)}}`;
  }
}

function* stopFeatures(l: PlanLayers, role: boolean): Generator<string> {
  const { ids, lonLat, demand } = l.stops;
  const { assignment, locked, zoneIds } = l.plan;
  const km = l.stats.stopKm;
  const outside = new Uint8Array(ids.length);
  if (l.boundaries) for (const i of l.boundaries.outside) outside[i] = 1;
  const head = role ? '"role":"stop",' : '';
  let buffer = '';
  for (let i = 0; i < ids.length; i++) {
    buffer += `{"type":"Feature","geometry":{"type":"Point","coordinates":[${deg6(lonLat[2 * i]!)},${deg6(lonLat[2 * i + 1]!)}]},"properties":{${head}"id":${JSON.stringify(ids[i])},"zone":${zoneIds[assignment[i]!]},"demand":${demand[i]},"km":${decimals(km[i]!, 3)}${locked && locked[i]! >= 0 ? ',"locked":true' : ''}${outside[i] ? ',"outsideZone":true' : ''}}}`;
    if (i + 1 < ids.length) buffer += ',\n';
    if (buffer.length > 1 << 20) {
      yield buffer;
      buffer = '';
    }
  }
  if (buffer) yield buffer;
}

/** Joins feature chunks into a FeatureCollection, with optional foreign members first. */
function* collection(parts: Iterable<string>[], foreign: Record<string, unknown> = {}): Generator<string> {
  const extra = Object.entries(foreign)
    .map(([key, v]) => `${JSON.stringify(key)}:${JSON.stringify(v)},`)
    .join('');
  yield `{"type":"FeatureCollection",${extra}"features":[\n`;
  let first = true;
  for (const part of parts) {
    for (const chunk of part) {
      if (chunk.length === 0) continue;
      yield first ? chunk : `,\n${chunk}`;
      first = false;
    }
  }
  yield '\n]}\n';
}

/**
 * The whole plan as one RFC 7946 FeatureCollection, in chunks of text: one Polygon or
 * MultiPolygon per zone (role "zone", when boundaries are drawn), one Point per zone centre
 * (role "centre") and one per stop (role "stop"); [longitude, latitude] with 6 decimals, no
 * "crs" member; zone statistics as flat properties. Re-imports whole (readPlanFile).
 */
export function planGeoJsonChunks(l: PlanLayers, generator = 'zoneplan'): Generator<string> {
  return collection([zoneFeatures(l, true), centreFeatures(l, true), stopFeatures(l, true)], { plan: summary(l, generator) });
}

/** One layer as its own FeatureCollection (one geometry type per file, as most GIS tools want). */
export function layerGeoJsonChunks(l: PlanLayers, layer: 'zones' | 'centres' | 'stops'): Generator<string> {
  const part = layer === 'zones' ? zoneFeatures(l, false) : layer === 'centres' ? centreFeatures(l, false) : stopFeatures(l, false);
  return collection([part]);
}
