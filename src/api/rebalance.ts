import type { StopSet } from '../io/stopset.js';
import { angle2To } from '../solve/candidates.js';
import type { LimitSettings } from '../solve/limits.js';
import type { Plan } from '../solve/plan.js';
import { rebalance, type MoveBudget } from '../solve/rebalance.js';
import { SolveError } from '../solve/types.js';
import { planFigures } from '../zones/stats.js';
import { resultOfPlan, type SolvedPlan } from './plan-file.js';
import type { PlanComparison, RebalanceReport } from './types.js';

export interface RebalanceOptions {
  /** Hard budget of moves (stops, or a share of total demand). */
  readonly budget?: MoveBudget;
  /**
   * Cost per unit of demand moved to another zone, km^2. Default: DEFAULT_MOVE_SHARE of the old
   * plan's mean squared km per unit of demand, so that a stop changes zone only where that
   * saves distance clearly, not for ties or slivers of objective.
   */
  readonly moveCostKm2?: number;
  /** New limits; default: those the plan was made with. */
  readonly limits?: LimitSettings | null;
  /** Zones to add (new vans) and zone labels to remove (a depot closes). */
  readonly addZones?: number;
  readonly removeZones?: readonly number[];
  readonly centre?: 'arc' | 'mean';
  /** Told how far the rebalance is, 0..1 (a rough share of the assignments it solves). */
  readonly onProgress?: (fraction: number) => void;
}

/**
 * The default move cost as a share of the old plan's mean squared km per unit of demand. Our own
 * choice (common practice, no source): small enough that real imbalances are still fixed, large
 * enough that unchanged demand moves nothing.
 */
export const DEFAULT_MOVE_SHARE = 0.1;

/**
 * Rebalances a plan for a new stop set (stops matched by id: added, removed, demand changed,
 * moved): same zones (labels and names kept; fixed centres stay, free ones may move), within
 * the limits of the original settings (or new ones), as few stops changing zone as the limits
 * and the budget allow. Stops of a removed zone must move and do not count against the budget;
 * added zones start at the stops the current centres serve worst. From an edited plan (with
 * `pinned`), the fixed centres are those pinned now (depots of the run and centres pinned by
 * hand, less those freed since), each staying where it was pinned; locked stops stay in the zone
 * they are locked to. The fixed zones come first in the new plan, as a plan's depots do.
 */
export function rebalancePlan(old: { stops: StopSet; plan: Plan; pinned?: Uint8Array }, stops: StopSet, options: RebalanceOptions = {}): { solved: SolvedPlan; report: RebalanceReport } {
  const { plan } = old;
  const oldK = plan.zoneIds.length;
  const removed = new Set(options.removeZones ?? []);
  for (const z of removed) {
    if (!plan.zoneIds.includes(z)) throw new SolveError(`zone ${z} is not in the plan (its zones are ${plan.zoneIds.join(', ')})`, 'settings');
  }
  const isFixed = (j: number): boolean => (old.pinned ? old.pinned[j] === 1 : j < plan.fixedZones);
  // New zone list: the kept zones with fixed centres, then the other kept ones, each in their
  // order, then the added ones.
  const kept: number[] = [];
  for (let j = 0; j < oldK; j++) if (!removed.has(plan.zoneIds[j]!) && isFixed(j)) kept.push(j);
  const fixedZones = kept.length;
  for (let j = 0; j < oldK; j++) if (!removed.has(plan.zoneIds[j]!) && !isFixed(j)) kept.push(j);
  const add = options.addZones ?? 0;
  if (!(Number.isInteger(add) && add >= 0)) throw new SolveError(`zones to add must be a whole number >= 0, got ${add}`, 'settings');
  const k = kept.length + add;
  if (k < 1) throw new SolveError('no zone would be left', 'zones');
  const newIndex = new Int32Array(oldK).fill(-1);
  kept.forEach((j, t) => (newIndex[j] = t));
  let nextLabel = Math.max(0, ...plan.zoneIds) + 1;
  const zoneIds = [...kept.map((j) => plan.zoneIds[j]!), ...Array.from({ length: add }, () => nextLabel++)];
  const zoneNames = [...kept.map((j) => plan.zoneNames[j] ?? null), ...new Array<string | null>(add).fill(null)];
  const fixed = new Uint8Array(k).fill(1, 0, fixedZones);

  // Match stops by id.
  const oldIndex = new Map<string, number>();
  old.stops.ids.forEach((id, i) => oldIndex.set(id, i));
  const n = stops.ids.length;
  const before = new Int32Array(n).fill(-1);
  const forced = new Uint8Array(n);
  const locked = plan.locked ? new Int32Array(n).fill(-1) : null;
  let added = 0;
  let demandChanged = 0;
  let positionChanged = 0;
  for (let i = 0; i < n; i++) {
    const o = oldIndex.get(stops.ids[i]!);
    if (o === undefined) {
      added++;
      continue;
    }
    const z = newIndex[plan.assignment[o]!]!;
    if (z < 0) forced[i] = 1;
    else before[i] = z;
    if (stops.demand[i] !== old.stops.demand[o]) demandChanged++;
    if (stops.lonLat[2 * i] !== old.stops.lonLat[2 * o] || stops.lonLat[2 * i + 1] !== old.stops.lonLat[2 * o + 1]) positionChanged++;
    const lockedTo = locked ? plan.locked![o]! : -1;
    if (lockedTo >= 0 && newIndex[lockedTo]! >= 0) locked![i] = newIndex[lockedTo]!;
  }
  const newIds = new Set(stops.ids);
  let removedStops = 0;
  for (const id of old.stops.ids) if (!newIds.has(id)) removedStops++;

  // Centres: kept ones, then seeds for the added zones at the worst-served stops.
  const centres = new Float64Array(3 * k);
  kept.forEach((j, t) => centres.set(plan.centres.subarray(3 * j, 3 * j + 3), 3 * t));
  for (let a = 0; a < add; a++) {
    const have = kept.length + a;
    let bestI = 0;
    let bestScore = -1;
    for (let i = 0; i < n; i++) {
      let d = Infinity;
      for (let j = 0; j < have; j++) d = Math.min(d, angle2To(stops.units, i, centres, j));
      const score = stops.demand[i]! * (have === 0 ? 1 : d);
      if (score > bestScore) {
        bestScore = score;
        bestI = i;
      }
    }
    centres.set(stops.units.subarray(3 * bestI, 3 * bestI + 3), 3 * have);
  }
  const limits = options.limits === undefined ? (plan.limitSettings ?? null) : options.limits;
  // Per-zone limits given by zone index follow the zones kept.
  const limitsForNew = limits ? remapLimits(limits, kept, add) : undefined;
  const result = rebalance(
    { units: stops.units, demand: stops.demand, before, forced, centres },
    {
      ...(limitsForNew ? { limits: limitsForNew } : {}),
      fixed,
      locked,
      ...(options.budget ? { budget: options.budget } : {}),
      moveCostKm2: options.moveCostKm2 ?? defaultMoveCost(old.stops, plan),
      ...(options.centre ? { centre: options.centre } : {}),
      stopIds: stops.ids,
    },
    options.onProgress,
  );
  const newPlan: Plan = {
    zoneIds,
    zoneNames,
    centres: result.centres,
    assignment: result.assignment,
    objectiveKm2: result.objectiveKm2,
    iterations: 0,
    converged: true,
    settings: { ...plan.settings, zones: k },
    fixedZones,
    locked,
    limits: result.limits
      ? {
          bounds: result.bounds,
          lpObjectiveKm2: result.limits.lpObjectiveKm2,
          lowerBoundKm2: result.limits.lowerBoundKm2,
          gap: result.limits.gap,
          feasible: result.limits.feasible,
          violations: result.limits.violations,
          split: result.limits.split,
          repaired: result.limits.repaired,
          blocked: result.limits.blocked,
          notes: result.notes,
        }
      : null,
    limitSettings: limitsForNew ?? null,
  };
  const figures = planFigures(stops.units, stops.demand, newPlan.centres, newPlan.assignment);
  const solved: SolvedPlan = { stops, plan: newPlan, result: { ...resultOfPlan(newPlan, figures.objectiveKm2) }, figures };
  const comparison = comparePlans(old, { stops, plan: newPlan });
  return {
    solved,
    report: {
      added,
      removedStops,
      demandChanged,
      positionChanged,
      forced: result.forced,
      moved: result.moved,
      movedDemand: result.movedDemand,
      budget: options.budget ? ('stops' in options.budget ? { stops: options.budget.stops } : { demandShare: options.budget.demandShare }) : null,
      comparison,
      feasible: result.limits ? result.limits.feasible : true,
      notes: result.notes.map((x) => x.message),
    },
  };
}

function remapLimits(l: LimitSettings, kept: number[], add: number): LimitSettings {
  const map = (v: number | readonly number[] | undefined): number | readonly number[] | undefined => {
    if (v === undefined || typeof v === 'number') return v;
    // Added zones take the largest of the old values (a new van like the biggest one).
    const extra = Math.max(...v.filter((x) => Number.isFinite(x)), 0);
    return [...kept.map((j) => v[j]!), ...new Array<number>(add).fill(Number.isFinite(extra) && extra > 0 ? extra : Infinity)];
  };
  const out: { -readonly [K in keyof LimitSettings]: LimitSettings[K] } = {};
  const cap = map(l.capacity);
  if (cap !== undefined) out.capacity = cap;
  if (l.balance !== undefined) out.balance = l.balance;
  const minS = map(l.minStops);
  if (minS !== undefined) out.minStops = minS;
  const maxS = map(l.maxStops);
  if (maxS !== undefined) out.maxStops = maxS;
  return out;
}


/**
 * Compares two plans of (possibly different) stop sets: stops present in both that changed zone
 * (by zone label), with their demand; workload and stops per zone label in each; objectives.
 */
export function comparePlans(a: { stops: StopSet; plan: Plan }, b: { stops: StopSet; plan: Plan }, listLimit = 1000): PlanComparison {
  // Two plans of the same stops (the common case) match stop for stop, without a map of every id.
  const same = sameIds(a.stops.ids, b.stops.ids);
  const index = new Map<string, number>();
  if (!same) a.stops.ids.forEach((id, i) => index.set(id, i));
  const changed: { id: string; from: number; to: number; demand: number }[] = [];
  let changedCount = 0;
  let changedDemand = 0;
  let common = 0;
  b.stops.ids.forEach((id, i) => {
    const o = same ? i : index.get(id);
    if (o === undefined) return;
    common++;
    const from = a.plan.zoneIds[a.plan.assignment[o]!]!;
    const to = b.plan.zoneIds[b.plan.assignment[i]!]!;
    if (from !== to) {
      changedCount++;
      changedDemand += b.stops.demand[i]!;
      if (changed.length < listLimit) changed.push({ id, from, to, demand: b.stops.demand[i]! });
    }
  });
  const fa = planFigures(a.stops.units, a.stops.demand, a.plan.centres, a.plan.assignment);
  const fb = planFigures(b.stops.units, b.stops.demand, b.plan.centres, b.plan.assignment);
  const labels = [...new Set([...a.plan.zoneIds, ...b.plan.zoneIds])].sort((x, y) => x - y);
  const zones = labels.map((zone) => {
    const ia = a.plan.zoneIds.indexOf(zone);
    const ib = b.plan.zoneIds.indexOf(zone);
    return {
      zone,
      name: (ib >= 0 ? b.plan.zoneNames[ib] : a.plan.zoneNames[ia]) ?? null,
      demandBefore: ia >= 0 ? fa.zones[ia]!.demand : null,
      demandAfter: ib >= 0 ? fb.zones[ib]!.demand : null,
      stopsBefore: ia >= 0 ? fa.zones[ia]!.stops : null,
      stopsAfter: ib >= 0 ? fb.zones[ib]!.stops : null,
    };
  });
  return {
    commonStops: common,
    changedStops: changedCount,
    changedDemand,
    changed,
    zones,
    objectiveBeforeKm2: fa.objectiveKm2,
    objectiveAfterKm2: fb.objectiveKm2,
  };
}

/**
 * One byte per stop of plan `shown`: 1 where the stop, present in plans a and b (by id),
 * has a different zone label in b than in a. Plans of the same stops match stop for stop.
 */
export function changedFlags(a: { stops: StopSet; plan: Plan }, b: { stops: StopSet; plan: Plan }, shown: { stops: StopSet }): Uint8Array {
  const n = shown.stops.ids.length;
  const flags = new Uint8Array(n);
  const indexOf = (p: { stops: StopSet }): ((i: number) => number | undefined) => {
    if (sameIds(p.stops.ids, shown.stops.ids)) return (i) => i;
    const index = new Map<string, number>();
    p.stops.ids.forEach((id, i) => index.set(id, i));
    return (i) => index.get(shown.stops.ids[i]!);
  };
  const inA = indexOf(a);
  const inB = indexOf(b);
  for (let i = 0; i < n; i++) {
    const ia = inA(i);
    const ib = inB(i);
    if (ia !== undefined && ib !== undefined && a.plan.zoneIds[a.plan.assignment[ia]!] !== b.plan.zoneIds[b.plan.assignment[ib]!]) flags[i] = 1;
  }
  return flags;
}

function sameIds(a: readonly string[], b: readonly string[]): boolean {
  if (a === b) return true;
  if (a.length !== b.length) return false;
  for (let i = 0; i < a.length; i++) if (a[i] !== b[i]) return false;
  return true;
}

/** DEFAULT_MOVE_SHARE of the plan's objective per unit of its demand (km^2), 0 for an empty plan. */
export function defaultMoveCost(stops: StopSet, plan: Plan): number {
  let total = 0;
  for (let i = 0; i < stops.demand.length; i++) total += stops.demand[i]!;
  return total > 0 && Number.isFinite(plan.objectiveKm2) ? (DEFAULT_MOVE_SHARE * plan.objectiveKm2) / total : 0;
}
