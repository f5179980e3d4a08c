import { readFileSync } from 'node:fs';
import type { MultiPolygon, Polygon } from 'geojson';
import { decodeText } from './decode.js';
import { parseStopsGeoJson } from './geojson-stops.js';
import { ProblemLog, fileError, showValue } from './problems.js';
import type { StopSet } from './stopset.js';
import { unitFromLonLat } from '../geo/unit.js';
import type { Plan } from '../solve/plan.js';

/** A plan read back from a Zoneplan plan file: its stops, the plan, and the zone polygons drawn. */
export interface PlanFile {
  readonly stops: StopSet;
  readonly plan: Plan;
  /** Zone polygons by zone index (null where the file has none). */
  readonly zones: (Polygon | MultiPolygon | null)[];
}

interface Feature {
  readonly type?: unknown;
  readonly geometry?: { type?: unknown; coordinates?: unknown } | null;
  readonly properties?: Record<string, unknown> | null;
}

/**
 * Reads a plan file written by Zoneplan (`zoneplan plan --out`): stops (role "stop", with zone,
 * demand and the locked flag), zone centres (role "centre": zone, name, fixed) and zone polygons
 * (role "zone"). Positions come back as written (6 decimals), zones and demand exactly, so a plan
 * survives the round trip. Throws ImportError naming the feature and field for anything amiss.
 */
export function readPlanFile(file: string): PlanFile {
  let text: string;
  try {
    text = decodeText(readFileSync(file)).text;
  } catch (e) {
    const code = (e as NodeJS.ErrnoException).code;
    throw fileError(file, 'unreadable', code === 'ENOENT' ? 'no such file' : `cannot be read (${code ?? String(e)})`);
  }
  const stops = parseStopsGeoJson(text, file, { demand: 'demand' });
  const doc = JSON.parse(text.replace(/^\uFEFF/, '')) as { features: Feature[]; plan?: Record<string, unknown> };
  const log = new ProblemLog(file);
  // Zones, in the order of their centres.
  const labels: number[] = [];
  const names: (string | null)[] = [];
  const fixed: boolean[] = [];
  const centres: number[] = [];
  const zoneAt = new Map<number, number>();
  doc.features.forEach((f, index) => {
    if (f?.properties?.role !== 'centre') return;
    const zone = f.properties.zone;
    const c = f.geometry?.coordinates;
    if (typeof zone !== 'number' || !Number.isInteger(zone) || zoneAt.has(zone)) {
      log.error({ code: 'bad-zone', feature: index, field: 'properties.zone', value: showValue(zone ?? null), message: 'each centre needs its own whole zone number' });
      return;
    }
    if (f.geometry?.type !== 'Point' || !Array.isArray(c) || typeof c[0] !== 'number' || typeof c[1] !== 'number') {
      log.error({ code: 'bad-coordinate', feature: index, field: 'geometry', message: 'a centre must be a Point [longitude, latitude]' });
      return;
    }
    zoneAt.set(zone, labels.length);
    labels.push(zone);
    names.push(typeof f.properties.name === 'string' ? f.properties.name : null);
    fixed.push(f.properties.fixed === true);
    centres.push(...unitFromLonLat(c[0], c[1]));
  });
  if (labels.length === 0 && log.ok) log.error({ code: 'no-centres', message: 'the file has no zone centres (features with role "centre"): is it a Zoneplan plan file?' });
  // The zone of every stop, in the order the stop reader kept them.
  const assignment = new Int32Array(stops.ids.length);
  const locked = new Int32Array(stops.ids.length).fill(-1);
  let anyLocked = false;
  stops.rows.forEach((featureIndex, i) => {
    const props = doc.features[featureIndex]?.properties ?? {};
    const z = zoneAt.get(props.zone as number);
    if (z === undefined) {
      log.error({ code: 'bad-zone', feature: featureIndex, field: 'properties.zone', value: showValue(props.zone ?? null), message: 'the stop names a zone that has no centre in the file' });
      return;
    }
    assignment[i] = z;
    if (props.locked === true) {
      locked[i] = z;
      anyLocked = true;
    }
  });
  const zones: (Polygon | MultiPolygon | null)[] = labels.map(() => null);
  doc.features.forEach((f) => {
    if (f?.properties?.role !== 'zone') return;
    const z = zoneAt.get(f.properties.zone as number);
    if (z !== undefined && (f.geometry?.type === 'Polygon' || f.geometry?.type === 'MultiPolygon')) zones[z] = f.geometry as Polygon | MultiPolygon;
  });
  log.throwIfErrors();
  // Fixed zones come first in a plan; a file from Zoneplan keeps them first.
  let fixedZones = 0;
  while (fixedZones < fixed.length && fixed[fixedZones]) fixedZones++;
  const summary = doc.plan ?? {};
  const plan: Plan = {
    zoneIds: labels,
    zoneNames: names,
    centres: Float64Array.from(centres),
    assignment,
    objectiveKm2: typeof summary.objectiveKm2 === 'number' ? summary.objectiveKm2 : Number.NaN,
    iterations: typeof summary.iterations === 'number' ? summary.iterations : 0,
    converged: summary.converged === true,
    settings: { zones: labels.length, ...(typeof summary.seed === 'number' ? { seed: summary.seed } : {}) },
    fixedZones,
    locked: anyLocked ? locked : null,
    limits: null,
    limitSettings: null,
  };
  return { stops, plan, zones };
}
