import { Random } from '../util/random.js';
import { assignWithLimits, solveLimitLp, type LimitedAssignment, type Prices, type ZoneBounds, type ZoneViolation } from './capacity.js';
import { updateCentresWeighted, type WeightedParts } from './centres.js';
import { checkSolve, defaultSampleStops, solveSteps, DEFAULT_MAX_ITERATIONS } from './kmeans.js';
import { hasLimits, zoneBounds, type LimitNote, type LimitSettings } from './limits.js';
import { seedCentres, seedScratch } from './seed.js';
import { nearestCandidates } from './candidates.js';
import { guessAssignment } from './guess.js';
import { aggregateStops, coarseSizes, type Aggregated } from './aggregate.js';
import { SolveError, type IterationRecord, type SolveInput, type SolveProgress, type SolveResult, type SolveSettings } from './types.js';

export interface LimitedSettings extends SolveSettings {
  /** Workload limits (capacity, balance band, stop counts). */
  readonly limits?: LimitSettings;
  /** Unit vectors (interleaved) of fixed centres: zones 0..F-1 stay exactly there. */
  readonly fixedCentres?: Float64Array;
  /** Per stop, the zone it must stay in, or -1. */
  readonly locked?: Int32Array;
  /** Stop names for messages (default "stop N"). */
  readonly stopIds?: readonly string[];
}

/** What the limits did, for the report. */
export interface LimitsReport {
  readonly bounds: ZoneBounds;
  /** The LP relaxation's objective at the final centres and its dual bound. */
  readonly lpObjectiveKm2: number;
  readonly lowerBoundKm2: number;
  /** (objective - lower bound) / objective of the final assignment. */
  readonly gap: number;
  readonly feasible: boolean;
  readonly violations: readonly ZoneViolation[];
  /** Stops the LP split between two zones, rounded to one; repair moves. */
  readonly split: number;
  readonly repaired: number;
  /** True when even the LP could not meet every bound (the lower bound and gap then do not apply). */
  readonly blocked: boolean;
  readonly notes: readonly LimitNote[];
}

export interface LimitedResult extends SolveResult {
  /** Null when no limit was set (fixed centres or locks only). */
  readonly limits: LimitsReport | null;
  /** Zones whose centre is fixed. */
  readonly fixedZones: number;
}

/** Relative fall of the LP objective below which the limited loop counts as settled. Common practice, no source. */
const SETTLED = 1e-5;
/**
 * The coarse levels (merged stops, cheap) settle to the same tolerance, within an iteration cap.
 * On every stop after them, where each iteration costs the most, the loop counts as settled at a
 * fall of 1e-4 (a hundredth of a percent per iteration): the coarse levels have already done the
 * long tail of small falls. Common practice, no source.
 */
const SETTLED_COARSE = 1e-5;
const COARSE_ITERATIONS = 200;
const SETTLED_AFTER_COARSE = 1e-4;

/**
 * Zones with workload limits, fixed centres and locked stops: the plan loop alternates the
 * capacity-limited assignment step (exact LP by min-cost flow, src/solve/capacity.ts) with the
 * centre update, on the LP relaxation (stops may be split), so that the objective never rises
 * and the loop converges; then the final step at the final centres is made in whole stops and
 * its gap to the LP bound reported.
 *
 * The start: plain spherical k-means (solveSteps) when no centre is fixed and no stop locked;
 * otherwise k-means++ continued from the fixed centres and Lloyd iterations that keep them and the
 * locks. With many stops, plain k-means and then the limited loop first run on coarse copies of
 * the stops (merged into grid cells, src/solve/aggregate.ts: every region's demand exact), and the
 * loop then continues on every stop from their centres and prices.
 */
export function* solveLimitedSteps(input: SolveInput, settings: LimitedSettings, start?: SolveResult): Generator<SolveProgress, LimitedResult, void> {
  checkSolve(input, settings);
  const { units, demand } = input;
  const n = demand.length;
  const k = settings.zones;
  const seed = settings.seed ?? 1;
  const maxIterations = settings.maxIterations ?? DEFAULT_MAX_ITERATIONS;
  const rule = settings.centre ?? 'arc';
  const fixedCount = (settings.fixedCentres?.length ?? 0) / 3;
  if (!Number.isInteger(fixedCount) || fixedCount > k) {
    throw new SolveError(`${fixedCount} fixed centres for ${k} zones: at most one per zone`, 'settings');
  }
  const locked = settings.locked ?? null;
  if (locked && locked.length !== n) throw new SolveError(`locks must name a zone (or -1) for each of the ${n} stops, got ${locked.length}`, 'settings');
  const label = (i: number): string => (settings.stopIds ? `stop "${settings.stopIds[i]}"` : `stop ${i + 1}`);
  const limited = hasLimits(settings.limits);
  const { bounds, notes } = limited
    ? zoneBounds(settings.limits!, k, demand, locked, label)
    : { bounds: unbounded(k), notes: [] as LimitNote[] };
  const fixed = new Uint8Array(k);
  for (let j = 0; j < fixedCount; j++) fixed[j] = 1;
  const restarts = settings.restarts ?? 4;
  const progress = (phase: SolveProgress['phase'], iteration: number, fraction: number): SolveProgress => ({
    phase,
    restart: 0,
    restarts,
    iteration,
    moved: 0,
    objectiveKm2: Number.NaN,
    fraction,
  });
  const history: IterationRecord[] = [];

  // 1. The start.
  let centres: Float64Array;
  let startResult: SolveResult | null = null;
  // Coarse copies of the stops (merged cells) for limited plans with many stops; the one the
  // plain start runs on is made once for it and for its level of the limited loop.
  const levels = limited ? coarseLevels(n, k, settings.sampleStops ?? defaultSampleStops(k)) : [];
  // Plain k-means starts on the first level of at least 100 cells per zone (20 000 at least), or
  // the last: on fewer cells its local optimum is a worse start (100k x 50: objective up 8%).
  let startLevel = levels.findIndex((size) => size >= Math.max(20_000, 100 * k));
  if (startLevel < 0) startLevel = levels.length - 1;
  let startCopy: Aggregated | null = null;
  const coarseCopy = (level: number): Aggregated => {
    if (level !== startLevel) return aggregateStops(units, demand, locked, levels[level]!);
    startCopy ??= aggregateStops(units, demand, locked, levels[level]!);
    return startCopy;
  };

  if (start && fixedCount === 0 && !locked) {
    startResult = start;
    centres = start.centres.slice();
    history.push(...start.history);
  } else if (fixedCount === 0 && !locked) {
    // With limits and many stops, plain k-means starts on a coarse level (the limited loop
    // refines on every stop later): its centres are as good a start and far cheaper.
    const plain = solveSteps(levels.length > 0 ? coarseCopy(startLevel) : input, settings);
    for (;;) {
      const s = plain.next();
      if (s.done) {
        startResult = s.value;
        break;
      }
      yield { ...s.value, fraction: s.value.fraction * (limited ? 0.4 : 1), phase: s.value.phase === 'done' ? 'mean' : s.value.phase };
    }
    centres = startResult.centres.slice();
    history.push(...startResult.history);
  } else {
    centres = new Float64Array(3 * k);
    if (fixedCount > 0) centres.set(settings.fixedCentres!.subarray(0, 3 * fixedCount));
    seedCentres(units, demand, k, new Random(seed, 0), centres, seedScratch(n), undefined, fixedCount);
    const run = lpLloyd(units, demand, centres, unbounded(k), locked, fixed, rule, maxIterations, null, 'mean');
    for (;;) {
      const s = run.next();
      if (s.done) break;
      history.push(s.value);
      yield progress('mean', s.value.iteration, Math.min(0.4, (0.4 * s.value.iteration) / (s.value.iteration + 10)));
    }
  }

  // 2. The limited loop (on a sample first when there are many stops), then the final step.
  let prices: Prices | null = null;
  let iterations = startResult?.iterations ?? history.length;
  let converged = startResult?.converged ?? true;
  let finalGuess: Int32Array | undefined;
  if (limited) {
    // Coarse to fine: merged copies of growing size (x5 each) up to a quarter of the stops, each
    // level starting from the last one's centres and prices, so that the full set needs only a
    // few iterations. The smallest has 20 cells per zone (at least 4 000).
    if (levels.length > 0) {
      for (let level = 0; level < levels.length; level++) {
        const sample = coarseCopy(level);
        const loose = level === 0 ? looseBounds(sample.units, sample.demand, centres, bounds, sample.locked) : null;
        const run = lpLloyd(sample.units, sample.demand, centres, bounds, sample.locked, fixed, rule, Math.min(maxIterations, COARSE_ITERATIONS + (loose ? 10 : 0)), prices, 'limits', SETTLED_COARSE, loose);
        for (;;) {
          const s = run.next();
          if (s.done) {
            prices = s.value.prices;
            break;
          }
          history.push({ ...s.value, stops: sample.demand.length });
          const base = 0.4 + (0.2 * level) / levels.length;
          yield progress('mean', s.value.iteration, base + ((0.2 / levels.length) * s.value.iteration) / (s.value.iteration + 10));
        }
      }
    }
    const loose = prices ? null : looseBounds(units, demand, centres, bounds, locked);
    // After the coarse levels, one iteration with a fall below SETTLED_AFTER_COARSE is enough.
    const run = lpLloyd(units, demand, centres, bounds, locked, fixed, rule, maxIterations, prices, 'limits', prices ? SETTLED_AFTER_COARSE : SETTLED, loose, prices ? 1 : 2);
    let steps = 0;
    for (;;) {
      const s = run.next();
      if (s.done) {
        prices = s.value.prices;
        converged = s.value.converged;
        finalGuess = s.value.guess;
        break;
      }
      steps++;
      history.push(s.value);
      yield progress('mean', s.value.iteration, 0.6 + (0.35 * s.value.iteration) / (s.value.iteration + 5));
    }
    iterations = steps;
  }
  const final: LimitedAssignment = assignWithLimits(units, demand, centres, bounds, locked, { ...(prices ? { warm: prices } : {}), ...(finalGuess ? { guess: finalGuess } : {}) });
  yield progress('done', iterations, 1);
  return {
    zones: k,
    centres,
    assignment: final.assignment,
    objectiveKm2: final.objectiveKm2,
    iterations,
    converged,
    bestRestart: startResult?.bestRestart ?? 0,
    restartObjectivesKm2: startResult?.restartObjectivesKm2 ?? [],
    startStops: startResult?.startStops ?? n,
    seed,
    reseeded: startResult?.reseeded ?? 0,
    history,
    distanceEvaluations: startResult?.distanceEvaluations ?? 0,
    naiveDistanceEvaluations: startResult?.naiveDistanceEvaluations ?? 0,
    fixedZones: fixedCount,
    limits: limited
      ? {
          bounds,
          lpObjectiveKm2: final.lpObjectiveKm2,
          lowerBoundKm2: final.lowerBoundKm2,
          gap: final.gap,
          feasible: final.feasible,
          violations: final.violations,
          split: final.split,
          repaired: final.repaired,
          blocked: final.blocked,
          notes,
        }
      : null,
  };
}

/**
 * Sizes (cells) of the coarse copies the limited loop runs on before every stop (coarseSizes);
 * none when `sampleStops` is 0 (no coarse start asked for). The smallest carries the continuation
 * from the plain k-means centres, where most stops change zone: it costs the least there.
 */
function coarseLevels(n: number, k: number, sampleStops: number): number[] {
  return sampleStops > 0 ? coarseSizes(n, k) : [];
}

/** Factor by which the continuation closes the gap to the target bounds per iteration. Common practice, no source. */
const RELAX = 0.6;

/** Bounds t of the way from `target` to `loose` (t = 1: loose, 0: target). */
function blend(target: ZoneBounds, loose: ZoneBounds, t: number): ZoneBounds {
  const mix = (a: Float64Array, b: Float64Array): Float64Array => a.map((x, j) => (Number.isFinite(x) && Number.isFinite(b[j]!) ? x + (b[j]! - x) * t : x));
  return { maxDemand: mix(target.maxDemand, loose.maxDemand), minDemand: mix(target.minDemand, loose.minDemand), maxStops: mix(target.maxStops, loose.maxStops), minStops: mix(target.minStops, loose.minStops) };
}

/**
 * Bounds that the nearest-centre assignment already meets: each target bound widened to the load
 * the zone has when every free stop goes to its nearest centre (locked stops to their zones).
 */
function looseBounds(units: Float64Array, demand: Float64Array, centres: Float64Array, target: ZoneBounds, locked: Int32Array | null): ZoneBounds {
  const k = centres.length / 3;
  const cand = nearestCandidates(units, centres, 1);
  const d = new Float64Array(k);
  const s = new Float64Array(k);
  for (let i = 0; i < demand.length; i++) {
    const z = locked && locked[i]! >= 0 ? locked[i]! : cand.zone[i]!;
    d[z]! += demand[i]!;
    s[z]!++;
  }
  return {
    maxDemand: target.maxDemand.map((x, j) => Math.max(x, d[j]!)),
    minDemand: target.minDemand.map((x, j) => Math.min(x, d[j]!)),
    maxStops: target.maxStops.map((x, j) => Math.max(x, s[j]!)),
    minStops: target.minStops.map((x, j) => Math.min(x, s[j]!)),
  };
}

function unbounded(k: number): ZoneBounds {
  return {
    maxDemand: new Float64Array(k).fill(Infinity),
    minDemand: new Float64Array(k),
    maxStops: new Float64Array(k).fill(Infinity),
    minStops: new Float64Array(k),
  };
}

/**
 * Lloyd iterations on the LP relaxation of the limited assignment: LP at the centres (from the
 * last prices), then every free centre to the weighted mean (or Karcher mean) of its parts of
 * stops, until the LP objective falls by less than SETTLED relative or the cap. Moves `centres`
 * in place. The LP objective never rises with the 'arc' rule.
 */
function* lpLloyd(
  units: Float64Array,
  demand: Float64Array,
  centres: Float64Array,
  bounds: ZoneBounds,
  locked: Int32Array | null,
  fixed: Uint8Array,
  rule: 'arc' | 'mean',
  maxIterations: number,
  warm: Prices | null,
  phase: 'mean' | 'limits',
  settled = SETTLED,
  relaxFrom: ZoneBounds | null = null,
  /** Iterations in a row with a fall below `settled` that count as settled. */
  calmNeeded = 2,
): Generator<IterationRecord, { prices: Prices | null; converged: boolean; guess: Int32Array }, void> {
  const n = demand.length;
  let prices = warm;
  // Each stop's zone in the last LP, where the candidate search starts (exact from any start,
  // fast from a near one); before the first LP, the zone of a coarse grid cell's middle.
  let guess = guessAssignment(units, centres);
  let first = true;
  let last = Infinity;
  let calm = 0;
  let relax = relaxFrom ? 1 : 0;
  for (let iteration = 1; iteration <= maxIterations; iteration++) {
    // Continuation: from bounds the start already meets towards the target, a factor RELAX per
    // iteration, so that each step moves stops a little and the centres follow.
    relax *= RELAX;
    if (relax < 0.01) relax = 0;
    const stepBounds = relax > 0 && relaxFrom ? blend(bounds, relaxFrom, relax) : bounds;
    const lp = solveLimitLp(units, demand, centres, stepBounds, locked, { ...(prices ? { warm: prices } : {}), guess });
    prices = lp.prices;
    // The parts of stops (locked stops whole, free ones as the LP holds them).
    const stop: number[] = [];
    const zone: number[] = [];
    const weight: number[] = [];
    const primary = new Int32Array(n);
    const primaryX = new Float64Array(n);
    for (let i = 0; i < n; i++) {
      if (locked && locked[i]! >= 0) {
        stop.push(i);
        zone.push(locked[i]!);
        weight.push(demand[i]!);
        primary[i] = locked[i]!;
        primaryX[i] = 1;
      }
    }
    lp.flow.forEachPiece((i, z, x) => {
      stop.push(i);
      zone.push(z);
      weight.push(x * demand[i]!);
      if (x > primaryX[i]!) {
        primaryX[i] = x;
        primary[i] = z;
      }
    });
    // Stops the flow does not carry (demand 0): their cheapest zone, weight 0.
    for (const i of lp.free) if (primaryX[i] === 0) primary[i] = lp.flow.bestZone(i);
    const parts: WeightedParts = { stop: Int32Array.from(stop), zone: Int32Array.from(zone), weight: Float64Array.from(weight) };
    const move = updateCentresWeighted(units, parts, centres, fixed, rule);
    let moved = 0;
    if (!first) for (let i = 0; i < n; i++) if (guess[i] !== primary[i]) moved++;
    first = false;
    guess = primary;
    const objective = lp.lpObjectiveKm2;
    yield {
      restart: 0,
      iteration,
      phase: phase === 'limits' ? 'limits' : 'mean',
      stops: n,
      moved,
      objectiveKm2: objective,
      phaseObjectiveKm2: objective,
      distanceEvaluations: 0,
    };
    if (relax > 0) {
      last = Infinity;
      continue;
    }
    const fall = (last - objective) / Math.max(1e-300, Math.abs(objective));
    last = objective;
    if (fall < settled && move < 1e-9) return { prices, converged: true, guess };
    calm = fall < settled ? calm + 1 : 0;
    if (calm >= calmNeeded) return { prices, converged: true, guess };
  }
  return { prices, converged: false, guess };
}
