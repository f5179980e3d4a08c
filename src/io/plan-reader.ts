import { readFileSync } from 'node:fs';
import type { MultiPolygon, Polygon } from 'geojson';
import { decodeText } from './decode.js';
import { parseStopsGeoJson } from './geojson-stops.js';
import { ProblemLog, fileError, showValue } from './problems.js';
import type { StopSet } from './stopset.js';
import { unitFromLonLat } from '../geo/unit.js';
import type { Plan } from '../solve/plan.js';
import type { LimitsReport } from '../solve/limited.js';
import type { ZoneViolation } from '../solve/capacity.js';

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
 * demand and the locked flag), zone centres (role "centre": zone, name, fixed, capacity) and zone polygons
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
  let labels: number[] = [];
  let names: (string | null)[] = [];
  let fixed: boolean[] = [];
  let centres: number[] = [];
  let capacity: number[] = [];
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
    // The zone's capacity (the writer's "capacity": its upper demand bound, null for none).
    const cap = f.properties.capacity ?? null;
    if (cap !== null && !(typeof cap === 'number' && cap >= 0 && Number.isFinite(cap))) {
      log.error({ code: 'bad-capacity', feature: index, field: 'properties.capacity', value: showValue(cap), message: 'a zone capacity must be a number >= 0, or null for none' });
    }
    capacity.push(typeof cap === 'number' ? cap : Infinity);
  });
  if (labels.length === 0 && log.ok) log.error({ code: 'no-centres', message: 'the file has no zone centres (features with role "centre"): is it a Zoneplan plan file?' });
  // Fixed zones come first in a plan. A file of a plan with centres pinned by hand has them
  // anywhere: they are taken first, each group in the file's order.
  const order = [...labels.keys()].sort((a, b) => Number(fixed[b]) - Number(fixed[a]) || a - b);
  if (order.some((j, t) => j !== t)) {
    labels = order.map((j) => labels[j]!);
    names = order.map((j) => names[j] ?? null);
    fixed = order.map((j) => fixed[j]!);
    centres = order.flatMap((j) => centres.slice(3 * j, 3 * j + 3));
    capacity = order.map((j) => capacity[j]!);
    labels.forEach((zone, t) => zoneAt.set(zone, t));
  }
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
  let fixedZones = 0;
  while (fixedZones < fixed.length && fixed[fixedZones]) fixedZones++;
  const summary = doc.plan ?? {};
  const limits = capacityLimits(capacity, assignment, stops.demand, summary.limits);
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
    limits,
    // Continuing from the plan (rebalance) keeps the capacities as its limits.
    limitSettings: limits ? { capacity } : null,
  };
  return { stops, plan, zones };
}

/**
 * The workload limits of a re-imported plan: the zones' capacities (Infinity where a zone has
 * none; null when none has), with the LP bound and gap from the file's plan summary. The file
 * keeps only capacities, so other limits (balance, stop counts) do not come back. Breaches are
 * worked out again from the stops' zones and demand (the solver's tolerance, 1e-9 of the scale).
 */
function capacityLimits(capacity: number[], assignment: Int32Array, demand: Float64Array, written: unknown): LimitsReport | null {
  if (!capacity.some((c) => Number.isFinite(c))) return null;
  const k = capacity.length;
  const load = new Float64Array(k);
  let total = 0;
  for (let i = 0; i < assignment.length; i++) {
    load[assignment[i]!]! += demand[i]!;
    total += demand[i]!;
  }
  const tol = 1e-9 * Math.max(1, total);
  const violations: ZoneViolation[] = [];
  capacity.forEach((c, j) => {
    if (load[j]! > c + tol) violations.push({ zone: j, kind: 'over-demand', load: load[j]!, bound: c, by: load[j]! - c });
  });
  const w = (written && typeof written === 'object' ? written : {}) as Record<string, unknown>;
  const lowerBound = typeof w.lowerBoundKm2 === 'number' ? w.lowerBoundKm2 : Number.NaN;
  return {
    bounds: { maxDemand: Float64Array.from(capacity), minDemand: new Float64Array(k), maxStops: new Float64Array(k).fill(Infinity), minStops: new Float64Array(k) },
    lpObjectiveKm2: lowerBound,
    lowerBoundKm2: lowerBound,
    gap: typeof w.gap === 'number' ? w.gap : Number.NaN,
    feasible: violations.length === 0 && w.feasible !== false,
    violations,
    split: 0,
    repaired: 0,
    blocked: Number.isNaN(lowerBound),
    notes: [],
  };
}
