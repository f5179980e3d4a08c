import { EARTH_RADIUS_KM } from '../geo/constants.js';
import { aggregateStops, coarseSizes } from './aggregate.js';
import { angle2To, nearestCandidates, withCheapest, withZones, type Candidates } from './candidates.js';
import { ZoneFlow } from './flow.js';
import { WholeStops } from './repair.js';

const R2 = EARTH_RADIUS_KM * EARTH_RADIUS_KM;

/**
 * Limits per zone, by zone index, for all its stops (locked ones included). Demand bounds are in
 * workload units (parcels, minutes, ...), stop bounds in stops. Infinity / 0 mean "no bound".
 */
export interface ZoneBounds {
  readonly maxDemand: Float64Array;
  readonly minDemand: Float64Array;
  readonly maxStops: Float64Array;
  readonly minStops: Float64Array;
}

/** Zone prices of an assignment step, to start the next one from (centres move little). */
export interface Prices {
  /** Added per unit of demand to a stop's squared central angle (rad^2). */
  readonly demand: Float64Array;
  /** Added per stop (when stop counts are what the flow carries). */
  readonly stops: Float64Array;
}

export type LimitKind = 'over-demand' | 'under-demand' | 'over-stops' | 'under-stops';

/** A zone bound the assignment could not meet, and by how much. */
export interface ZoneViolation {
  readonly zone: number;
  readonly kind: LimitKind;
  /** The zone's demand or stop count, and the bound it breaks. */
  readonly load: number;
  readonly bound: number;
  /** |load - bound|. */
  readonly by: number;
}

export interface LimitOptions {
  /** Candidate zones per stop (default 8). */
  readonly candidates?: number;
  /** Prices to start from. */
  readonly warm?: Prices;
  /** A guess of each stop's zone (speeds up the candidate search). */
  readonly guess?: Int32Array;
  /** Shortest paths at most (default 50 n + 10 000). */
  readonly maxPaths?: number;
  /**
   * For rebalancing: each stop's zone in the plan before (-1: none) and what moving it away costs,
   * per unit of demand in rad^2 (the same units as demand x angle^2); the step then minimises
   * distance cost plus move cost.
   */
  readonly stay?: Int32Array;
  readonly moveCost?: Float64Array;
}

/**
 * The LP relaxation of one assignment step (stops may be split between zones), solved exactly
 * as a min-cost flow (src/solve/flow.ts), with its dual bound.
 */
export interface LimitLp {
  readonly candidates: Candidates;
  readonly flow: ZoneFlow;
  /** Stops not locked, by index. */
  readonly free: readonly number[];
  /** Demand and stop counts of the locked stops per zone. */
  readonly lockedDemand: Float64Array;
  readonly lockedStops: Float64Array;
  /** Sum of demand x angle^2 (rad^2) of the locked stops. */
  readonly lockedCost: number;
  /** Bounds left for the free stops. */
  readonly freeBounds: ZoneBounds;
  /** True when the flow carries demand (demand bounds set, or none); false: stop counts. */
  readonly byDemand: boolean;
  /** The LP's objective (sum of demand x great-circle km^2, split stops in part). */
  readonly lpObjectiveKm2: number;
  /**
   * The Lagrangian dual at the final prices: a lower bound on every assignment in the bounds
   * (on distance + move cost when a move cost is set).
   */
  readonly lowerBoundKm2: number;
  readonly prices: Prices;
  /** True when the bounds could not all be met even with stops split. */
  readonly blocked: boolean;
}

/**
 * Solves the LP relaxation of the capacity-limited assignment step at fixed centres: minimise
 * the sum of demand x squared great-circle distance subject to every zone's demand (or stop
 * count) bounds, locked stops fixed. When both demand and stop-count bounds are set, the flow
 * carries demand and the stop counts are left to the whole-stop repair (assignWithLimits).
 */
export function solveLimitLp(units: Float64Array, demand: Float64Array, centres: Float64Array, bounds: ZoneBounds, locked: Int32Array | null, options: LimitOptions = {}): LimitLp {
  return solveLp(units, demand, centres, bounds, locked, options, 'top');
}

/**
 * Extra candidate zones per stop, by value at the start prices (src/solve/candidates.ts,
 * withCheapest). Measured on the benchmark's stops (200k x 100, balance 5%, LP from a coarse
 * copy's prices): 4 772 shortest paths and no second round with 4 extra (2 did as well), 110 902
 * paths and eight rounds of moving stops past their lists without.
 */
const EXTRA_CANDIDATES = 4;

/** Continuations of the LP's flow with margins, at most (each about one LP's cost or less). Common practice, no source. */
const MARGIN_TRIES = 4;

/**
 * Start prices for a step that has none (the first step of a plan or a rebalance at new
 * centres): the LPs of coarse copies of the stops (merged cells, every region's demand exact,
 * src/solve/aggregate.ts; the sizes of the limited plan's levels) at the same centres and
 * bounds, each from the last one's prices. From prices of zero every stop starts at its
 * nearest centre and, under a tight band, the paths carry the whole difference zone by zone
 * through chains of neighbours (1M x 200: not done in 5 minutes); from a coarse copy's prices
 * only what the merging hid is left. Where a finer copy's LP cannot meet the bounds, the last
 * copy's prices that could are kept; null when there are too few stops for a copy or the
 * coarsest copy cannot meet them. A rebalance's move costs are not carried (its first step then
 * starts from prices without them, which its own flow corrects).
 */
function ladderPrices(units: Float64Array, demand: Float64Array, centres: Float64Array, bounds: ZoneBounds, locked: Int32Array | null, options: LimitOptions, n: number): Prices | null {
  const k = centres.length / 3;
  let prices: Prices | null = null;
  for (const size of coarseSizes(n, k)) {
    const copy = aggregateStops(units, demand, locked, size);
    const lp = solveLp(copy.units, copy.demand, centres, bounds, copy.locked, { ...(options.candidates ? { candidates: options.candidates } : {}), ...(options.maxPaths !== undefined ? { maxPaths: options.maxPaths } : {}), ...(prices ? { warm: prices } : {}) }, 'ladder');
    if (lp.blocked) return prices;
    prices = lp.prices;
  }
  return prices;
}

/**
 * `role`: 'top' for a step of its own (it may take its start prices from the ladder), 'ladder'
 * for a coarse copy's LP inside ladderPrices.
 */
function solveLp(units: Float64Array, demand: Float64Array, centres: Float64Array, bounds: ZoneBounds, locked: Int32Array | null, options: LimitOptions, role: 'top' | 'ladder'): LimitLp {
  const n = demand.length;
  const k = centres.length / 3;
  const lockedDemand = new Float64Array(k);
  const lockedStops = new Float64Array(k);
  let lockedCost = 0;
  const free: number[] = [];
  for (let i = 0; i < n; i++) {
    const l = locked ? locked[i]! : -1;
    if (l >= 0) {
      lockedDemand[l]! += demand[i]!;
      lockedStops[l]!++;
      lockedCost += demand[i]! * angle2To(units, i, centres, l);
    } else free.push(i);
  }
  const freeBounds: ZoneBounds = {
    maxDemand: bounds.maxDemand.map((b, j) => b - lockedDemand[j]!),
    minDemand: bounds.minDemand.map((b, j) => Math.max(0, b - lockedDemand[j]!)),
    maxStops: bounds.maxStops.map((b, j) => b - lockedStops[j]!),
    minStops: bounds.minStops.map((b, j) => Math.max(0, b - lockedStops[j]!)),
  };
  let demandBounded = false;
  let stopsBounded = false;
  for (let j = 0; j < k; j++) {
    if (Number.isFinite(freeBounds.maxDemand[j]!) || freeBounds.minDemand[j]! > 0) demandBounded = true;
    if (Number.isFinite(freeBounds.maxStops[j]!) || freeBounds.minStops[j]! > 0) stopsBounded = true;
  }
  const byDemand = demandBounded || !stopsBounded;
  const supply = byDemand ? demand : new Float64Array(n).fill(1);
  const costFactor = byDemand ? new Float64Array(n).fill(1) : demand;
  const carried = Int32Array.from(free.filter((i) => supply[i]! > 0));
  const upper = byDemand ? freeBounds.maxDemand : freeBounds.maxStops;
  const lower = byDemand ? freeBounds.minDemand : freeBounds.minStops;
  const bonus = stayBonus(options, byDemand, demand);
  // Start prices: the ones given, else (demand bounds on many stops) a coarse copy's. Merged
  // cells hold demand exactly but not stop counts, so a flow of stop counts gets none.
  let warm = options.warm ? (byDemand ? options.warm.demand : options.warm.stops) : undefined;
  // Extra candidates by value where the start prices differ much from the ones this step will
  // end at (a coarse copy's): the steps of a plan's loop, warm from the last step at nearby
  // centres, move few stops past their nearest zones, and the extras cost them more than they
  // save (1M x 200 balance 5%, the whole plan by hand: 71.7 s and 1 324 MB with them, 50.0 s and
  // 1 147 MB without).
  let extra = role === 'ladder' && warm ? EXTRA_CANDIDATES : 0;
  if (!warm && role === 'top' && byDemand && demandBounded) {
    const start = ladderPrices(units, demand, centres, bounds, locked, options, carried.length);
    if (start) {
      warm = start.demand;
      extra = EXTRA_CANDIDATES;
    }
  }
  const near = nearestCandidates(units, centres, options.candidates ?? 8, options.guess);
  const listed = extra > 0 && warm ? withCheapest(near, units, centres, warm, costFactor, extra) : near;
  const candidates = options.stay ? withZones(listed, units, centres, options.stay) : listed;
  const flow = new ZoneFlow(
    units,
    centres,
    candidates,
    carried,
    supply,
    costFactor,
    { upper, lower },
    warm,
    options.stay ?? null,
    bonus,
  );
  const maxPaths = options.maxPaths ?? 50 * n + 10_000;
  flow.run(maxPaths);
  for (let round = 0; round < 8 && !flow.blocked && flow.settle() > 0; round++) flow.run(maxPaths);

  // Dual bound (exact least values over all zones): at most the LP optimum.
  let dual = lockedCost;
  for (let t = 0; t < carried.length; t++) dual += supply[carried[t]!]! * flow.leastValue(carried[t]!);
  for (let j = 0; j < k; j++) {
    const up = Math.max(flow.price[j]!, 0);
    const down = Math.max(-flow.price[j]!, 0);
    if (up > 0) dual -= up * upper[j]!;
    if (down > 0) dual += down * lower[j]!;
  }
  // The LP's distance objective (the move cost, if any, is not part of it) and its move cost.
  let lp = lockedCost;
  flow.forEachPiece((i, z, x) => {
    lp += x * demand[i]! * flow.angle2(i, z);
  });
  if (bonus) {
    // With a move cost the flow minimises distance + move cost - (the move cost of every stop
    // that has a zone to stay in): add that constant back, so that the bound is one on
    // distance + move cost.
    for (let t = 0; t < carried.length; t++) {
      const i = carried[t]!;
      if (options.stay![i]! >= 0) dual += supply[i]! * bonus[i]!;
    }
  }
  // Stops the flow does not carry (demand 0 when demand is bounded) cost nothing.
  const price = flow.price.slice();
  return {
    candidates,
    flow,
    free,
    lockedDemand,
    lockedStops,
    lockedCost,
    freeBounds,
    byDemand,
    lpObjectiveKm2: lp * R2,
    lowerBoundKm2: dual * R2,
    prices: byDemand ? { demand: price, stops: new Float64Array(k) } : { demand: new Float64Array(k), stops: price },
    blocked: flow.blocked,
  };
}

/** Per-unit stay bonus for the flow (move cost per unit of the flow's commodity). */
function stayBonus(options: LimitOptions, byDemand: boolean, demand: Float64Array): Float64Array | null {
  if (!options.stay || !options.moveCost) return null;
  // moveCost is per unit of demand; when the flow carries stop counts, per stop it is w x that.
  return byDemand ? options.moveCost : options.moveCost.map((c, i) => c * demand[i]!);
}

export interface LimitedAssignment {
  /** Zone of every stop, whole stops. */
  readonly assignment: Int32Array;
  /** Sum of demand x (great-circle km)^2 of this assignment. */
  readonly objectiveKm2: number;
  /** The LP relaxation's objective and its dual bound, at the same centres. */
  readonly lpObjectiveKm2: number;
  readonly lowerBoundKm2: number;
  /** (objective - lower bound) / objective: how far from optimal this assignment can be at most. */
  readonly gap: number;
  readonly feasible: boolean;
  readonly violations: readonly ZoneViolation[];
  readonly prices: Prices;
  /** Shortest paths of the flow; stops the LP split (rounded to one zone each); repair moves. */
  readonly paths: number;
  readonly split: number;
  readonly repaired: number;
  /** True when even the LP (stops split) could not meet every bound: the lower bound then does not apply. */
  readonly blocked: boolean;
}

/**
 * The capacity-limited assignment step at fixed centres, in whole stops: the LP relaxation
 * (solveLimitLp), its split stops rounded to the zone that breaks the bounds least, the breaks
 * repaired by single moves and two-move chains (src/solve/repair.ts), then improved. Where the
 * repair cannot mend a bound, the flow is solved once more with that bound tightened by the
 * breach and the better outcome kept. Whatever still breaks a bound is listed with the amount.
 * The LP's dual bound is reported, so the gap to the best possible assignment is known.
 */
export function assignWithLimits(
  units: Float64Array,
  demand: Float64Array,
  centres: Float64Array,
  bounds: ZoneBounds,
  locked: Int32Array | null,
  options: LimitOptions = {},
): LimitedAssignment {
  const lp = solveLimitLp(units, demand, centres, bounds, locked, options);
  const n = demand.length;
  const k = centres.length / 3;
  const { flow, free, freeBounds, candidates: cand, byDemand } = lp;
  const lpPaths = flow.augmentations;
  const supply = byDemand ? demand : null;
  const angle2 = (i: number, j: number): number => flow.angle2(i, j);
  const demandScale = Math.max(1e-300, free.reduce((s, i) => s + demand[i]!, 0) / k);
  const stopScale = Math.max(1, free.length / k);
  const upper = byDemand ? freeBounds.maxDemand : freeBounds.maxStops;
  const lower = byDemand ? freeBounds.minDemand : freeBounds.minStops;

  // With a move cost: what moving stop i from zone `from` to `to` adds (or saves) in move cost.
  const stay = options.stay;
  const mc = options.moveCost;
  const moveCostOf = stay && mc
    ? (i: number, from: number, to: number): number => (stay[i]! < 0 ? 0 : demand[i]! * mc[i]! * ((to !== stay[i] ? 1 : 0) - (from !== stay[i] ? 1 : 0)))
    : null;
  interface Whole {
    whole: WholeStops;
    assignment: Int32Array;
    split: number;
    repaired: number;
    breach: number;
    cost: number;
    moves: number;
    roundLoad: Float64Array;
  }
  const fullBudget = (split: number): number => Math.max(100, 2 * k + split * 4);
  /** Repairs (up to `budget` moves), improves, and counts cost, move cost and breach. */
  const finish = (w: Whole, budget: number): Whole => {
    const repaired = w.repaired + w.whole.repair(budget);
    w.whole.improve(2);
    let cost = 0;
    for (const i of free) cost += demand[i]! * angle2(i, w.assignment[i]!);
    // Choosing between outcomes counts the move cost too (the objective stays the distance one).
    let moves = 0;
    if (stay && mc) for (const i of free) if (stay[i]! >= 0 && w.assignment[i] !== stay[i]) moves += demand[i]! * mc[i]!;
    return { ...w, repaired, breach: w.whole.totalBreach(), cost, moves };
  };
  const makeWhole = (f: ZoneFlow, quick = false): Whole => {
    const assignment = new Int32Array(n);
    for (let i = 0; i < n; i++) if (locked && locked[i]! >= 0) assignment[i] = locked[i]!;
    const split = f.round(assignment);
    const roundLoad = f.load.slice();
    // Stops the flow does not carry: their cheapest zone at the prices.
    for (const i of free) if (supply && !(supply[i]! > 0)) assignment[i] = f.bestZone(i);
    const whole = new WholeStops(demand, cand, angle2, free, freeBounds, assignment, moveCostOf);
    return finish({ whole, assignment, split, repaired: 0, breach: 0, cost: 0, moves: 0, roundLoad }, quick ? split + 10 : fullBudget(split));
  };
  const better = (a: Whole, b: Whole): boolean => a.breach < b.breach - 1e-12 || (a.breach <= b.breach && a.cost + a.moves < b.cost + b.moves);
  /**
   * The flow once more with every bound a rounding broke tightened by its breach, and, with
   * `margins`, every bound tightened by the largest stop the LP split in that zone, or a mean
   * stop where none (at most a quarter of the band, or 2% of a capacity), so that rounding the
   * next LP's split stops, which are mostly in the same zones, keeps them within and single moves
   * find room. Null when that flow is blocked. With `base`, that flow (rounded, so every stop
   * whole in a zone of least value at its prices) continues under the new bounds: only what the
   * tightening moves is carried, instead of every stop again; otherwise a new flow starts from
   * the LP's prices.
   */
  const lpPrice = byDemand ? lp.prices.demand : lp.prices.stops;
  const retryWith = (roundLoad: Float64Array, margins: boolean, base: ZoneFlow | null): Whole | null => {
    const tol = 1e-9 * (byDemand ? demandScale : stopScale);
    // Every zone gets at least a mean stop of room, so that single moves can mend what is left.
    const meanSupply = byDemand ? (demandScale * k) / Math.max(1, free.length) : 1;
    const adjUpper = Float64Array.from(upper);
    const adjLower = Float64Array.from(lower);
    for (let j = 0; j < k; j++) {
      const l = roundLoad[j]!;
      const band = lower[j]! > 0 && Number.isFinite(upper[j]!) ? 0.25 * (upper[j]! - lower[j]!) : 0.02 * (Number.isFinite(upper[j]!) ? upper[j]! : lower[j]!);
      const m = margins ? Math.min(Math.max(flow.largestSplit[j]!, meanSupply), band) : 0;
      if (Number.isFinite(upper[j]!)) adjUpper[j] = Math.min(upper[j]! - m, l > upper[j]! + tol ? upper[j]! - (l - upper[j]!) : Infinity);
      if (lower[j]! > 0) adjLower[j] = Math.max(lower[j]! + m, l < lower[j]! - tol ? lower[j]! + (lower[j]! - l) : -Infinity);
    }
    let retry: ZoneFlow;
    if (base) {
      retry = base;
      retry.rebound({ upper: adjUpper, lower: adjLower });
    } else {
      const carried = Int32Array.from(free.filter((i) => (byDemand ? demand[i]! > 0 : true)));
      retry = new ZoneFlow(
        units,
        centres,
        cand,
        carried,
        byDemand ? demand : new Float64Array(n).fill(1),
        byDemand ? new Float64Array(n).fill(1) : demand,
        { upper: adjUpper, lower: adjLower },
        lpPrice,
        options.stay ?? null,
        stayBonus(options, byDemand, demand),
      );
    }
    const maxPaths = retry.augmentations + (options.maxPaths ?? 50 * n + 10_000);
    retry.run(maxPaths);
    for (let round = 0; round < 8 && !retry.blocked && retry.settle() > 0; round++) retry.run(maxPaths);
    return retry.blocked ? null : makeWhole(retry);
  };
  // The repair's cost per move grows with the zones' size: with large zones (over 1000 stops
  // each), the first rounding gets a few moves only. What the repair cannot mend goes to the flow
  // with tightened bounds (with margins, then without); with large zones the first rounding's
  // full repair is the last resort.
  const large = free.length > 1000 * k;
  const first = makeWhole(flow, large);
  let chosen = first;
  if (chosen.breach > 0) {
    // The LP's own flow, rounded by the first rounding, continues with the margins.
    // Where its rounding still breaks a bound (a stop larger than the margin split in a zone that
    // had none), it continues again from that rounding, the margins grown by the stops split since.
    let from: Whole | null = first;
    for (let tries = 0; tries < MARGIN_TRIES && from && chosen.breach > 0; tries++) {
      const other = retryWith(from.roundLoad, true, flow);
      if (other && better(other, chosen)) chosen = other;
      from = other && other.breach < from.breach ? other : null;
    }
    // Margins can leave too little room in all (a capacity near the total demand), and cost more
    // than the breaches alone where those suffice: with smaller zones both are tried.
    if (chosen.breach > 0 || !large) {
      const plain = retryWith(first.roundLoad, false, null);
      if (plain && better(plain, chosen)) chosen = plain;
    }
    if (large && chosen.breach > 0) {
      // The further repair works on the first rounding's own assignment: when that is the one
      // chosen, its figures must be the ones after the repair.
      const more = finish(first, fullBudget(first.split));
      if (chosen === first || better(more, chosen)) chosen = more;
    }
  }

  const { assignment, split, repaired, whole } = chosen;
  const violations: ZoneViolation[] = [];
  const tol = 1e-9 * demandScale;
  for (let j = 0; j < k; j++) {
    const D = whole.loadD[j]! + lp.lockedDemand[j]!;
    const S = whole.loadS[j]! + lp.lockedStops[j]!;
    const md = bounds.maxDemand[j]!;
    const nd = bounds.minDemand[j]!;
    const ms = bounds.maxStops[j]!;
    const ns = bounds.minStops[j]!;
    if (D > md + tol) violations.push({ zone: j, kind: 'over-demand', load: D, bound: md, by: D - md });
    if (D < nd - tol) violations.push({ zone: j, kind: 'under-demand', load: D, bound: nd, by: nd - D });
    if (S > ms) violations.push({ zone: j, kind: 'over-stops', load: S, bound: ms, by: S - ms });
    if (S < ns) violations.push({ zone: j, kind: 'under-stops', load: S, bound: ns, by: ns - S });
  }
  const objectiveKm2 = (lp.lockedCost + chosen.cost) * R2;
  // Within the bounds, objective >= LP optimum >= dual (up to rounding in the last digits).
  const gap = objectiveKm2 > 0 ? (objectiveKm2 - lp.lowerBoundKm2) / objectiveKm2 : 0;
  return {
    assignment,
    objectiveKm2,
    lpObjectiveKm2: lp.lpObjectiveKm2,
    lowerBoundKm2: lp.lowerBoundKm2,
    gap: violations.length === 0 ? Math.max(0, gap) : gap,
    feasible: violations.length === 0,
    violations,
    prices: lp.prices,
    paths: lpPaths,
    split,
    repaired,
    blocked: lp.blocked,
  };
}
