import { EARTH_RADIUS_KM } from '../geo/constants.js';
import { assignWithLimits, type LimitedAssignment, type Prices, type ZoneBounds } from './capacity.js';
import { updateCentres } from './centres.js';
import { angle2To } from './candidates.js';
import { hasLimits, zoneBounds, type LimitNote, type LimitSettings } from './limits.js';
import { SolveError } from './types.js';

const R2 = EARTH_RADIUS_KM * EARTH_RADIUS_KM;

/** The most a plan may change: stops that change zone, or a share of the total demand. */
export type MoveBudget = { readonly stops: number } | { readonly demandShare: number };

export interface RebalanceInput {
  /** The new stops (unit vectors, interleaved) and their demand. */
  readonly units: Float64Array;
  readonly demand: Float64Array;
  /** Each new stop's zone (index into the new zones) in the plan before, or -1: a new stop, or its zone was removed. */
  readonly before: Int32Array;
  /** Stops whose zone was removed (they must move; not counted against the budget). */
  readonly forced: Uint8Array;
  /** Centres of the new zones to start from (kept zones: their old centres; added: seeds). */
  readonly centres: Float64Array;
}

export interface RebalanceSettings {
  readonly limits?: LimitSettings;
  /** Zones whose centre stays (fixed depots). */
  readonly fixed?: Uint8Array;
  readonly locked?: Int32Array | null;
  /** Hard budget of moves; none: only the move cost holds stops in place. */
  readonly budget?: MoveBudget;
  /** Cost of moving a unit of demand to another zone, in km^2 (added to the objective; default 0). */
  readonly moveCostKm2?: number;
  readonly centre?: 'arc' | 'mean';
  /** Rounds of centre update and reassignment (default 3). */
  readonly rounds?: number;
  readonly stopIds?: readonly string[];
}

export interface RebalanceResult {
  readonly assignment: Int32Array;
  readonly centres: Float64Array;
  /** Sum of demand x (great-circle km)^2. */
  readonly objectiveKm2: number;
  /** Stops (present before and after, their zone kept) that changed zone, and their demand. */
  readonly moved: number;
  readonly movedDemand: number;
  /** Stops whose zone was removed (moved of necessity). */
  readonly forced: number;
  /** The budget in stops and in demand as given, and the price per move the search settled on. */
  readonly budget: MoveBudget | null;
  readonly movePrice: number;
  readonly limits: LimitedAssignment | null;
  readonly bounds: ZoneBounds;
  readonly notes: readonly LimitNote[];
}

/**
 * Rebalances a plan after its stops or their demand changed, moving as few stops as the limits
 * and the budget allow: the assignment step of the limited plan (src/solve/capacity.ts) with a
 * cost on every unit of demand that leaves its zone. A hard budget of moves is met by searching
 * the price of a move (a Lagrangian multiplier of the budget) by bisection: the least price at
 * which the plan stays within the budget; the plan then has the lowest distance cost among those
 * the search met within the budget. Free centres follow their zones for a few rounds; fixed ones
 * stay. When even moving only what the limits force exceeds the budget, the error names the
 * smallest budget that works.
 */
export function rebalance(input: RebalanceInput, settings: RebalanceSettings): RebalanceResult {
  const { units, demand, before, forced } = input;
  const n = demand.length;
  const k = input.centres.length / 3;
  const locked = settings.locked ?? null;
  const label = (i: number): string => (settings.stopIds ? `stop "${settings.stopIds[i]}"` : `stop ${i + 1}`);
  const limits = settings.limits;
  const { bounds, notes } = hasLimits(limits) ? zoneBounds(limits!, k, demand, locked, label) : { bounds: open(k), notes: [] as LimitNote[] };
  const stay = Int32Array.from(before, (z, i) => (forced[i] ? -1 : z));
  let totalDemand = 0;
  for (let i = 0; i < n; i++) totalDemand += demand[i]!;
  const budget = settings.budget ?? null;
  const limitStops = budget && 'stops' in budget ? budget.stops : Infinity;
  const limitDemand = budget && 'demandShare' in budget ? budget.demandShare * totalDemand : Infinity;
  if (budget && 'stops' in budget && !(Number.isInteger(budget.stops) && budget.stops >= 0)) throw new SolveError(`the move budget must be a whole number of stops >= 0, got ${budget.stops}`, 'settings');
  if (budget && 'demandShare' in budget && !(budget.demandShare >= 0 && budget.demandShare <= 1)) throw new SolveError(`the move budget must be a share of demand from 0 to 100%, got ${budget.demandShare}`, 'settings');
  const baseCost = (settings.moveCostKm2 ?? 0) / R2;
  const fixed = settings.fixed ?? null;
  const rule = settings.centre ?? 'arc';

  const count = (a: Int32Array): { moved: number; movedDemand: number } => {
    let moved = 0;
    let movedDemand = 0;
    for (let i = 0; i < n; i++) {
      if (stay[i]! >= 0 && a[i] !== stay[i]) {
        moved++;
        movedDemand += demand[i]!;
      }
    }
    return { moved, movedDemand };
  };
  const within = (c: { moved: number; movedDemand: number }): boolean => c.moved <= limitStops && c.movedDemand <= limitDemand * (1 + 1e-12);
  // The price of a move, per unit of demand (rad^2): the base move cost plus the budget's
  // multiplier (for a budget in stops, spread over each stop's demand).
  const perUnit = (lambda: number): Float64Array =>
    Float64Array.from(demand, (w) => baseCost + (budget && 'stops' in budget ? (w > 0 ? lambda / w : lambda) : lambda));

  let centres = input.centres.slice();
  let warm: Prices | undefined;
  const step = (lambda: number): LimitedAssignment => {
    const r = assignWithLimits(units, demand, centres, bounds, locked, { stay, moveCost: perUnit(lambda), ...(warm ? { warm } : {}) });
    warm = r.prices;
    return r;
  };
  // A price high enough that no move pays for itself: above the largest cost difference.
  let scale = 0;
  for (let i = 0; i < n; i += Math.max(1, Math.floor(n / 2000))) {
    for (let j = 0; j < k; j++) scale = Math.max(scale, angle2To(units, i, centres, j));
  }
  const high = 4 * Math.max(scale, 1e-12) * Math.max(1, ...Array.from(demand.subarray(0, Math.min(n, 2000))));

  let best: { r: LimitedAssignment; lambda: number; c: { moved: number; movedDemand: number }; centres: Float64Array } | null = null;
  const rounds = settings.rounds ?? 3;
  for (let round = 0; round < rounds; round++) {
    let lambda = 0;
    let r = step(0);
    let c = count(r.assignment);
    if (budget && !within(c)) {
      const top = step(high);
      const ct = count(top.assignment);
      if (!within(ct)) {
        const need = 'stops' in budget ? `${ct.moved} stops` : `${((ct.movedDemand / totalDemand) * 100).toFixed(2)}% of demand (${ct.movedDemand})`;
        throw new SolveError(
          `the move budget is too small: meeting the zone limits with the new demand needs at least ${need} to change zone; allow that many (or relax the limits)`,
          'infeasible',
        );
      }
      // Bisection on the price of a move: the least price that keeps the plan within budget.
      let lo = 0;
      let hi = high;
      r = top;
      c = ct;
      lambda = high;
      for (let it = 0; it < 24 && hi - lo > 1e-9 * high; it++) {
        const mid = (lo + hi) / 2;
        const rm = step(mid);
        const cm = count(rm.assignment);
        if (within(cm)) {
          hi = mid;
          r = rm;
          c = cm;
          lambda = mid;
        } else lo = mid;
      }
    }
    const score = r.objectiveKm2 + baseCost * R2 * c.movedDemand;
    const bestScore = best ? best.r.objectiveKm2 + baseCost * R2 * best.c.movedDemand : Infinity;
    if (!best || (r.feasible && !best.r.feasible) || (r.feasible === best.r.feasible && score < bestScore)) best = { r, lambda, c, centres: centres.slice() };
    if (round + 1 === rounds) break;
    // Free centres follow their zones; then assign again.
    const next = centres.slice();
    const moveChord = updateCentres(units, demand, r.assignment, next, fixed, rule);
    if (moveChord < 1e-10) break;
    centres = next;
  }
  const chosen = best!;
  let forcedCount = 0;
  for (let i = 0; i < n; i++) if (forced[i]) forcedCount++;
  return {
    assignment: chosen.r.assignment,
    centres: chosen.centres,
    objectiveKm2: chosen.r.objectiveKm2,
    moved: chosen.c.moved,
    movedDemand: chosen.c.movedDemand,
    forced: forcedCount,
    budget,
    movePrice: chosen.lambda * R2,
    limits: hasLimits(limits) ? chosen.r : null,
    bounds,
    notes,
  };
}

function open(k: number): ZoneBounds {
  return { maxDemand: new Float64Array(k).fill(Infinity), minDemand: new Float64Array(k), maxStops: new Float64Array(k).fill(Infinity), minStops: new Float64Array(k) };
}
