import { DISTANCE_NOTE } from '../io/plan-geojson.js';
import { EARTH_RADIUS_KM } from '../geo/constants.js';
import { angleBetween } from '../geo/distance.js';
import type { BoundariesStamp, PlanArrays, PlanInfo, PlanView, StopDetails } from './app-types.js';
import type { EditedPlan } from './edited-plan.js';
import { limitsOutcome, zoneRows } from './plan-file.js';
import { workloadSpread } from './sweep.js';
import type { ZoneRow } from './types.js';

/** Shown wherever distances are: what they are, and what they are not. */
export const APP_DISTANCE_NOTE = `${DISTANCE_NOTE} Shift lengths and driving hours are not checked: they must follow local labour rules.`;

export function planInfo(p: EditedPlan): PlanInfo {
  const r = p.loaded.info;
  return {
    name: r.name,
    createdAt: r.created,
    stopSetId: r.stopSet,
    zones: r.zones,
    stops: r.stops,
    objectiveKm2: p.figures.objectiveKm2,
    parent: r.parent,
    edits: p.edits,
    feasible: r.feasible,
  };
}

/** Zone rows of the plan now: limits checked against the zones as edited, centres fixed as pinned and freed since. */
function rows(p: EditedPlan): ZoneRow[] {
  const out = zoneRows(p.plan, p.figures);
  if (p.edits === 0) return out;
  return out.map((z, j) => {
    const over = z.maxDemand !== null && z.demand > z.maxDemand * (1 + 1e-9);
    const under = z.minDemand !== null && z.demand < z.minDemand * (1 - 1e-9);
    return { ...z, fixed: p.pinned[j] === 1, breaksLimits: over || under };
  });
}

/** Which state of the plan a view is, which state its polygons show, and whether newer ones are being drawn. */
export interface ViewState {
  readonly version: number;
  readonly boundariesVersion: number;
  readonly pending: boolean;
}

/** The polygons stamped with what they show (a new collection: the cached one is shared between views). */
function stamped(boundaries: unknown, plan: string, s: ViewState): unknown {
  const stamp: BoundariesStamp = { plan, version: s.version, boundariesVersion: s.boundariesVersion, pending: s.pending };
  if (boundaries && typeof boundaries === 'object') return { ...boundaries, zoneplan: stamp };
  // None to show yet, but on the way: an empty collection tells the map to ask again.
  return s.pending ? { type: 'FeatureCollection', features: [], zoneplan: stamp } : null;
}

export function planView(p: EditedPlan, boundaries: unknown, notes: readonly string[], canUndo: boolean, canRedo: boolean, state: ViewState): PlanView {
  const zones = rows(p);
  const spread = workloadSpread(zones.map((z) => z.demand));
  const limits = limitsOutcome(p.plan);
  const allNotes = [...notes, ...(limits?.notes ?? [])];
  if (p.edits > 0 && limits) allNotes.push(`the limits figures (bound, gap) are those of the plan as solved; the zone table shows the zones after ${p.edits} manual edit${p.edits === 1 ? '' : 's'}`);
  return {
    info: planInfo(p),
    zones,
    limits,
    boundaries: stamped(boundaries, p.loaded.info.name, state),
    version: state.version,
    boundariesVersion: state.boundariesVersion,
    boundariesPending: state.pending,
    objectiveKm2: p.figures.objectiveKm2,
    maxMinRatio: Number.isFinite(spread.maxMinRatio) ? spread.maxMinRatio : null,
    demandCv: spread.cv,
    notes: allNotes,
    distanceNote: APP_DISTANCE_NOTE,
    canUndo,
    canRedo,
  };
}

const align = (x: number, to: number): number => Math.ceil(x / to) * to;

/** The stops for drawing, in one buffer (see PlanArrays): lon/lat, zone index, demand, locked. */
export function planArrays(p: EditedPlan): PlanArrays {
  const n = p.stops.ids.length;
  const lonLatOffset = 0;
  const zoneOffset = 8 * n;
  const demandOffset = align(zoneOffset + 2 * n, 4);
  const lockedOffset = demandOffset + 4 * n;
  const buffer = new ArrayBuffer(align(lockedOffset + n, 8));
  new Float32Array(buffer, lonLatOffset, 2 * n).set(p.stops.lonLat);
  const zone = new Int16Array(buffer, zoneOffset, n);
  for (let i = 0; i < n; i++) zone[i] = p.plan.assignment[i]!;
  new Float32Array(buffer, demandOffset, n).set(p.stops.demand);
  const locked = new Uint8Array(buffer, lockedOffset, n);
  for (let i = 0; i < n; i++) locked[i] = p.locked[i]! >= 0 ? 1 : 0;
  return { count: n, buffer, lonLatOffset, zoneOffset, demandOffset, lockedOffset };
}

export function stopDetails(p: EditedPlan, index: number): StopDetails {
  const { stops, plan } = p;
  const u = stops.units;
  const z = plan.assignment[index]!;
  const c = plan.centres;
  const km = EARTH_RADIUS_KM * angleBetween(u[3 * index]!, u[3 * index + 1]!, u[3 * index + 2]!, c[3 * z]!, c[3 * z + 1]!, c[3 * z + 2]!);
  return {
    index,
    id: stops.ids[index]!,
    lon: stops.lonLat[2 * index]!,
    lat: stops.lonLat[2 * index + 1]!,
    demand: stops.demand[index]!,
    zone: plan.zoneIds[z]!,
    km,
    locked: p.locked[index]! >= 0,
  };
}
