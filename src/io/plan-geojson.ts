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
  /** Workload spread and the stops not inside their own zone's polygon (null without boundaries). */
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
  /** 1 for zones whose centre is a fixed depot (the plan's depots and the centres pinned by hand); default: the plan's first fixedZones. */
  readonly fixed?: Uint8Array | null;
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

/**
 * A ring's positions as JSON text, 6 decimals, leaving out a position that rounds to the one
 * before it (points a hair apart, such as two Voronoi vertices of four stops on a circle, become
 * one position, which turf.kinks and GIS validators would take for a self-intersection). Null
 * when fewer than four positions (three distinct) remain: a degenerate ring, dropped.
 */
function ringJson(ring: Position[]): string | null {
  const kept: string[] = [];
  for (const p of ring) {
    const text = `[${deg6(p[0]!)},${deg6(p[1]!)}]`;
    if (text !== kept[kept.length - 1]) kept.push(text);
  }
  // The ring stays closed: its last position rounds like its first (kept unless equal to the one before).
  return kept.length >= 4 ? `[${kept.join(',')}]` : null;
}

/** A polygon's rings as JSON text; null when its exterior ring is degenerate (holes that are, are dropped). */
function polygonJson(rings: Position[][]): string | null {
  const exterior = ringJson(rings[0]!);
  if (exterior === null) return null;
  const holes = rings.slice(1).map(ringJson).filter((h): h is string => h !== null);
  return `[${[exterior, ...holes].join(',')}]`;
}

/**
 * Geometry JSON text, 6 decimals, rings wound per RFC 7946 section 3.1.6 (exterior counter-clockwise),
 * without repeated positions or degenerate rings ("null" if nothing is left). With `multi`, a
 * Polygon is written as a MultiPolygon of one polygon, for layers of one geometry type.
 */
export function geometryJson(g: Polygon | MultiPolygon, multi = false): string {
  const wound = rewind(structuredClone(g) as Geometry, false) as Polygon | MultiPolygon;
  const polygons = (wound.type === 'Polygon' ? [wound.coordinates] : wound.coordinates).map(polygonJson).filter((p): p is string => p !== null);
  if (polygons.length === 0) return 'null';
  if (wound.type === 'Polygon' && !multi) return `{"type":"Polygon","coordinates":${polygons[0]!}}`;
  return `{"type":"MultiPolygon","coordinates":[${polygons.join(',')}]}`;
}

function* zoneFeatures(l: PlanLayers, role: boolean): Generator<string> {
  if (!l.boundaries) return;
  for (const z of l.stats.zones) {
    const g = l.boundaries.zones[z.zone];
    const props = { ...(role ? { role: 'zone' } : {}), ...zoneProperties(l.plan, z, l.fixed) };
    // The zones layer (no role) has one geometry type, as GIS layers want: every zone a
    // MultiPolygon (RFC 7946 section 3.1.7), a Polygon being one of one. The plan file mixes
    // geometry types anyway (zones, centres, stops) and keeps each zone's own type.
    yield `{"type":"Feature","geometry":${g ? geometryJson(g, !role) : 'null'},"properties":${JSON.stringify(props)}}`;
  }
}

function* centreFeatures(l: PlanLayers, role: boolean): Generator<string> {
  for (const z of l.stats.zones) {
    const props = { ...(role ? { role: 'centre' } : {}), ...zoneProperties(l.plan, z, l.fixed) };
    yield `{"type":"Feature","geometry":{"type":"Point","coordinates":[${deg6(z.centreLon)},${deg6(z.centreLat)}]},"properties":${JSON.stringify(props)}}`;
  }
}

function* stopFeatures(l: PlanLayers, role: boolean): Generator<string> {
  const { ids, lonLat, demand } = l.stops;
  const { assignment, locked, zoneIds } = l.plan;
  const km = l.stats.stopKm;
  // "outsideZone": not inside its own zone's polygon, in another zone's territory or outside the
  // service area (the stops counted in the plan's stopsOutsideOwnZone).
  const outside = new Uint8Array(ids.length);
  for (const i of l.stats.outsideOwnZoneStops) outside[i] = 1;
  const head = role ? '"role":"stop",' : '';
  let buffer = '';
  for (let i = 0; i < ids.length; i++) {
    // Features are joined by ",\n" inside a chunk; collection() joins the chunks.
    buffer += `${buffer ? ',\n' : ''}{"type":"Feature","geometry":{"type":"Point","coordinates":[${deg6(lonLat[2 * i]!)},${deg6(lonLat[2 * i + 1]!)}]},"properties":{${head}"id":${JSON.stringify(ids[i])},"zone":${zoneIds[assignment[i]!]},"demand":${demand[i]},"km":${decimals(km[i]!, 3)}${locked && locked[i]! >= 0 ? ',"locked":true' : ''}${outside[i] ? ',"outsideZone":true' : ''}}}`;
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
