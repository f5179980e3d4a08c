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

/**
 * Told how far a rebalance is, 0..1, after each assignment it solves (a rough share: the number
 * of assignments a search needs depends on how soon its price search settles).
 */
export type RebalanceProgress = (fraction: number) => void;

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
 * stay. A plan within the budget never breaks a limit that the plan without a budget holds.
 * When even moving only what the limits force exceeds the budget, the error names the smallest
 * budget the search found to work (checked by searching within it; the search is a heuristic, so
 * "smallest" is the fewest moves it met, not a proven minimum).
 */
export function rebalance(input: RebalanceInput, settings: RebalanceSettings, onProgress?: RebalanceProgress): RebalanceResult {
  const budget = settings.budget;
  // Each search solves `rounds` assignments without a budget; with one, up to 2 + BISECTIONS per
  // round. The fraction told counts the assignments solved against that (never going back).
  const rounds = settings.rounds ?? 3;
  const expected = budget ? rounds * (2 + BISECTIONS) : rounds;
  let solved = 0;
  let told = 0;
  const tick = onProgress
    ? (): void => {
        solved++;
        const f = Math.min(0.99, solved / expected);
        if (f > told) onProgress((told = f));
      }
    : undefined;
  const search = (i: RebalanceInput, s: RebalanceSettings): RebalanceResult | TooSmall => searchOnce(i, s, tick);
  if (!budget) return search(input, settings) as RebalanceResult;
  type Moves = { readonly moved: number; readonly movedDemand: number };
  const measure = (m: Moves): number => ('stops' in budget ? m.moved : m.movedDemand);
  // The plan without a budget, made when first needed: when it holds the limits and a search
  // within the budget did not, it is the answer if it fits the budget, else it names a budget
  // that works.
  const { budget: _budget, ...unbudgeted } = settings;
  let free: RebalanceResult | null = null;
  const freePlan = (): RebalanceResult | null => {
    free ??= search(input, unbudgeted) as RebalanceResult;
    return !free.limits || free.limits.feasible ? free : null;
  };
  const attempt = (b: MoveBudget): RebalanceResult | TooSmall => {
    const r = search(input, { ...settings, budget: b });
    if (!('tooSmall' in r) && (!r.limits || r.limits.feasible)) return r;
    const f = freePlan();
    if (!f) return r; // the limits cannot be held even without a budget: the best effort, or too small
    if ('stops' in b ? f.moved <= b.stops : f.movedDemand <= b.demandShare * sum(input.demand) * (1 + 1e-12)) return { ...f, budget: b };
    // Too small: the fewer moves of what the search met and of the plan without a budget.
    const byFree: TooSmall = { tooSmall: { moved: f.moved, movedDemand: f.movedDemand }, totalDemand: sum(input.demand) };
    return 'tooSmall' in r && measure(r.tooSmall) <= measure(byFree.tooSmall) ? r : byFree;
  };
  const first = attempt(budget);
  if (!('tooSmall' in first)) return first;
  // The budget is too small. Name one that works: the fewest moves the search met, raised until
  // a search within it finds a plan (as typed, a percentage rounded up, and as the exact demand);
  // failing that, the moves of the plan without a budget (which then fits).
  const totalDemand = first.totalDemand;
  let need: Moves = first.tooSmall;
  let works = false;
  for (let tries = 0; tries < 8 && !works; tries++) {
    const asked: MoveBudget[] = 'stops' in budget ? [{ stops: need.moved }] : [{ demandShare: Math.min(1, need.movedDemand / totalDemand) }, { demandShare: Math.min(1, shareUp(need.movedDemand, totalDemand)) }];
    const failed = asked.map(attempt).filter((r): r is TooSmall => 'tooSmall' in r);
    works = failed.length === 0;
    const raised = failed.reduce<Moves>((m, f) => (measure(f.tooSmall) > measure(m) ? f.tooSmall : m), need);
    if (!works && raised === need) break; // no higher number to try
    need = raised;
  }
  if (!works) {
    const f = freePlan();
    if (f) need = { moved: f.moved, movedDemand: f.movedDemand };
  }
  const what = 'stops' in budget ? `${need.moved} stops` : `${(shareUp(need.movedDemand, totalDemand) * 100).toFixed(2)}% of demand (${need.movedDemand})`;
  throw new SolveError(`the move budget is too small: meeting the zone limits with the new demand needs at least ${what} to change zone; allow that many (or relax the limits)`, 'infeasible');
}

function sum(a: Float64Array): number {
  let s = 0;
  for (let i = 0; i < a.length; i++) s += a[i]!;
  return s;
}

/** A share of the total rounded up to 0.01%, so that the percentage printed is enough. */
function shareUp(part: number, total: number): number {
  return Math.ceil((part / total) * 10000 - 1e-9) / 10000;
}

/** What a search reports when no plan within the budget was found: the fewest moves it met. */
interface TooSmall {
  readonly tooSmall: { readonly moved: number; readonly movedDemand: number };
  readonly totalDemand: number;
}

/** Steps of the bisection on the price of a move, at most. */
const BISECTIONS = 24;

function searchOnce(input: RebalanceInput, settings: RebalanceSettings, tick?: () => void): RebalanceResult | TooSmall {
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
  // Of every plan met that holds the limits: the fewest moves (what a budget too small is told to
  // allow), and the best within the budget (taken when the search ends on one that breaks a limit).
  const measure = (c: { moved: number; movedDemand: number }): number => (budget && 'stops' in budget ? c.moved : c.movedDemand);
  let leastFeasible: { moved: number; movedDemand: number } | null = null;
  let bestFeasible: { r: LimitedAssignment; lambda: number; c: { moved: number; movedDemand: number }; centres: Float64Array } | null = null;
  const step = (lambda: number): LimitedAssignment => {
    const r = assignWithLimits(units, demand, centres, bounds, locked, { stay, moveCost: perUnit(lambda), ...(warm ? { warm } : {}) });
    warm = r.prices;
    tick?.();
    if (budget && r.feasible) {
      const c = count(r.assignment);
      if (!leastFeasible || measure(c) < measure(leastFeasible)) leastFeasible = c;
      const score = (x: { r: LimitedAssignment; c: { movedDemand: number } }): number => x.r.objectiveKm2 + baseCost * R2 * x.c.movedDemand;
      if (within(c) && (!bestFeasible || score({ r, c }) < score(bestFeasible))) bestFeasible = { r, lambda, c, centres: centres.slice() };
    }
    return r;
  };
  const tooSmall = (least: { moved: number; movedDemand: number }): TooSmall => ({ tooSmall: least, totalDemand });
  // A price high enough that no move pays for itself: above the largest cost difference.
  let scale = 0;
  for (let i = 0; i < n; i += Math.max(1, Math.floor(n / 2000))) {
    for (let j = 0; j < k; j++) scale = Math.max(scale, angle2To(units, i, centres, j));
  }
  // (Over every stop's demand: a heavy stop past the first few thousand must not find a move
  // that pays at this price.)
  let maxDemand = 1;
  for (let i = 0; i < n; i++) maxDemand = Math.max(maxDemand, demand[i]!);
  const high = 4 * Math.max(scale, 1e-12) * maxDemand;

  let best: { r: LimitedAssignment; lambda: number; c: { moved: number; movedDemand: number }; centres: Float64Array } | null = null;
  const rounds = settings.rounds ?? 3;
  for (let round = 0; round < rounds; round++) {
    let lambda = 0;
    let r = step(0);
    let c = count(r.assignment);
    // A plan is acceptable when it is within the budget and, where the limits can be met at all
    // (the plan without a move price meets them), meets them too: a budget never buys its moves
    // by breaking a cap.
    const needFeasible = r.feasible;
    const ok = (x: LimitedAssignment, cx: { moved: number; movedDemand: number }): boolean => within(cx) && (x.feasible || !needFeasible);
    if (budget && !ok(r, c)) {
      const top = step(high);
      const ct = count(top.assignment);
      if (!ok(top, ct)) {
        // A later round: its moved centres need more moves than the budget allows, but an
        // earlier round's plan is within it. Keep that one (the budget is only too small when
        // no plan within it was found at all).
        if (best) break;
        // The fewer moves of the two plans met that hold the limits (the high price does not
        // always find fewer).
        return tooSmall(leastFeasible ?? (measure(c) <= measure(ct) ? c : ct));
      }
      // Bisection on the price of a move: the least price that keeps the plan acceptable.
      let lo = 0;
      let hi = high;
      r = top;
      c = ct;
      lambda = high;
      for (let it = 0; it < BISECTIONS && hi - lo > 1e-9 * high; it++) {
        const mid = (lo + hi) / 2;
        const rm = step(mid);
        const cm = count(rm.assignment);
        if (ok(rm, cm)) {
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
  let chosen = best!;
  // The search ended on a plan that breaks a limit: take the best one met within the budget
  // that holds them; with none, but one with more moves, the budget is what stands in the way,
  // so say so rather than return a plan that breaks a cap.
  if (budget && !chosen.r.feasible) {
    if (bestFeasible) chosen = bestFeasible;
    else if (leastFeasible) return tooSmall(leastFeasible);
  }
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
