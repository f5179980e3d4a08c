import { unitFromLonLat } from '../geo/unit.js';
import type { StoredEdit } from '../store/types.js';
import { planFigures } from '../zones/stats.js';
import type { SolvedPlan } from './plan-file.js';
import type { LoadedPlan } from './project.js';

/**
 * A saved plan as the planner sees it now: the plan as solved with its manual edits applied in
 * order (stops moved, locked and unlocked, zone centres pinned and freed), and its figures recomputed.
 */
export interface EditedPlan extends SolvedPlan {
  readonly loaded: LoadedPlan;
  /** 1 for zones whose centre is a fixed depot now: the plan's depots and the centres pinned by hand, less those freed since. */
  readonly pinned: Uint8Array;
  /** The zone each stop is locked to, or -1. */
  readonly locked: Int32Array;
  readonly edits: number;
}

export function applyEdits(loaded: LoadedPlan, edits: readonly StoredEdit[]): EditedPlan {
  const { plan, stops } = loaded;
  const n = stops.ids.length;
  const k = plan.zoneIds.length;
  const assignment = Int32Array.from(plan.assignment);
  const centres = Float64Array.from(plan.centres);
  const locked = plan.locked ? Int32Array.from(plan.locked) : new Int32Array(n).fill(-1);
  const pinned = new Uint8Array(k);
  for (let j = 0; j < plan.fixedZones; j++) pinned[j] = 1;
  for (const e of edits) {
    const i = e.stopIndex;
    if (e.kind === 'move' && i !== null && e.toZone !== null) assignment[i] = e.toZone;
    else if (e.kind === 'lock' && i !== null && e.toZone !== null) locked[i] = e.toZone;
    else if (e.kind === 'unlock' && i !== null) locked[i] = -1;
    else if (e.kind === 'pin-centre' && e.toZone !== null && e.lon !== null && e.lat !== null) {
      centres.set(unitFromLonLat(e.lon, e.lat), 3 * e.toZone);
      pinned[e.toZone] = 1;
    } else if (e.kind === 'unpin-centre' && e.toZone !== null) {
      if (e.lon !== null && e.lat !== null) centres.set(unitFromLonLat(e.lon, e.lat), 3 * e.toZone);
      pinned[e.toZone] = 0;
    }
  }
  if (edits.length === 0) return { ...loaded, loaded, pinned, locked, edits: 0 };
  const edited = { ...plan, assignment, centres, locked };
  const figures = planFigures(stops.units, stops.demand, centres, assignment);
  return {
    stops,
    plan: edited,
    result: { ...loaded.result, assignment, centres, objectiveKm2: figures.objectiveKm2 },
    figures,
    loaded,
    pinned,
    locked,
    edits: edits.length,
  };
}
