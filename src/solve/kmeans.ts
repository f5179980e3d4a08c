import { Random } from '../util/random.js';
import { ZoneEngine } from './engine.js';
import { seedCentres, seedScratch, type SeedScratch } from './seed.js';
import { countDistinctUpTo } from './distinct.js';
import { guessAssignment } from './guess.js';
import { drive, type DriveHooks } from './drive.js';
import {
  SolveError,
  type IterationRecord,
  type SolveInput,
  type SolveProgress,
  type SolveResult,
  type SolveSettings,
} from './types.js';

export const DEFAULT_RESTARTS = 4;
export const DEFAULT_MAX_ITERATIONS = 500;
/** Refinement rounds of the 'arc' centre rule at most, and the centre move (chord) below which it stops. */
const ARC_ROUNDS = 50;
const ARC_TOLERANCE = 1e-10;
/** Stream number of the sampling draw, apart from the starts' streams 0, 1, 2, ... */
const SAMPLE_STREAM = 0x53414d50;

/** Stops the starts are compared on by default: max(100 000, 250 per zone). Common practice, no source. */
export function defaultSampleStops(zones: number): number {
  return Math.max(100_000, 250 * zones);
}

/** Checks settings and data; throws a SolveError whose message says what to change. */
export function checkSolve(input: SolveInput, settings: SolveSettings): void {
  const n = input.demand.length;
  const k = settings.zones;
  if (input.units.length !== 3 * n) throw new SolveError(`units must hold 3 numbers per stop: ${input.units.length} for ${n} stops`, 'settings');
  if (!Number.isInteger(k) || k < 1) throw new SolveError(`zones must be a whole number of at least 1, got ${k}`, 'zones');
  if (n === 0) throw new SolveError('there are no stops to divide into zones', 'no-stops');
  const seed = settings.seed ?? 1;
  if (!Number.isSafeInteger(seed) || seed < 0) throw new SolveError(`seed must be a whole number >= 0, got ${seed}`, 'settings');
  const restarts = settings.restarts ?? DEFAULT_RESTARTS;
  if (!Number.isInteger(restarts) || restarts < 1) throw new SolveError(`restarts must be a whole number of at least 1, got ${restarts}`, 'settings');
  const maxIterations = settings.maxIterations ?? DEFAULT_MAX_ITERATIONS;
  if (!Number.isInteger(maxIterations) || maxIterations < 1) throw new SolveError(`maxIterations must be a whole number of at least 1, got ${maxIterations}`, 'settings');
  if (settings.centre !== undefined && settings.centre !== 'arc' && settings.centre !== 'mean') {
    throw new SolveError(`centre must be 'arc' or 'mean', got '${String(settings.centre)}'`, 'settings');
  }
  const sample = settings.sampleStops;
  if (sample !== undefined && (!Number.isInteger(sample) || sample < 0)) {
    throw new SolveError(`sampleStops must be a whole number >= 0 (0: starts on every stop), got ${sample}`, 'settings');
  }
  let total = 0;
  for (let i = 0; i < n; i++) {
    const w = input.demand[i]!;
    if (!(w >= 0) || !Number.isFinite(w)) throw new SolveError(`demand of stop ${i} must be a finite number >= 0, got ${w}`, 'settings');
    total += w;
  }
  if (!(total > 0)) {
    throw new SolveError('every stop has demand 0: there is no workload to share out; give stops a demand, or leave the demand column out so that each stop counts 1', 'no-demand');
  }
  const distinct = countDistinctUpTo(input.units, k);
  if (distinct < k) {
    throw new SolveError(
      `${k} zones asked for, but the stops sit at only ${distinct} distinct location${distinct === 1 ? '' : 's'}: ask for at most ${distinct} zone${distinct === 1 ? '' : 's'}`,
      'too-few-locations',
    );
  }
}

/** The outcome of one k-means++ start, of its continuation on every stop, or of its refinement. */
export interface StartResult {
  readonly restart: number;
  readonly centres: Float64Array;
  readonly assignment: Int32Array;
  readonly objectiveKm2: number;
  readonly iterations: number;
  readonly converged: boolean;
  readonly reseeded: number;
  readonly distanceEvaluations: number;
  readonly naiveDistanceEvaluations: number;
}

/**
 * Weighted k-means on the sphere, as a generator: it yields progress after every iteration and
 * returns the plan. Pure computation over typed arrays; the drivers below run it to the end
 * (`solveZones`) or with progress and cancellation (`solveZonesAsync`).
 *
 * 1. Starts: each seeds with weighted k-means++ from its own random stream and runs Lloyd
 *    iterations (exact nearest-centre assignment, vector-mean centres) until no stop changes
 *    zone. With more than twice `sampleStops` stops, the starts run on a uniform sample of that
 *    many stops (P. S. Bradley and U. M. Fayyad, "Refining initial points for k-means
 *    clustering", ICML 1998) and only the best one continues on every stop.
 * 2. The start with the lowest objective is kept (continued on every stop when sampled).
 * 3. With the 'arc' rule, its centres then step to the Karcher means of their zones and stops are
 *    reassigned until nothing changes, which lowers the reported great-circle objective further.
 */
export function* solveSteps(input: SolveInput, settings: SolveSettings): Generator<SolveProgress, SolveResult, void> {
  const prepared = prepareStarts(input, settings);
  const { startInput, restarts, maxIterations, seed, k } = prepared;
  const stages = prepared.stages;
  const startEngine = new ZoneEngine(startInput.units, startInput.demand, k);
  const scratch = seedScratch(startInput.demand.length);
  const starts: StartOutcome[] = [];
  let fraction = 0;
  for (let r = 0; r < restarts; r++) {
    const history: IterationRecord[] = [];
    const run = runStart(startEngine, scratch, seed, r, maxIterations);
    for (;;) {
      const step = run.next();
      if (step.done) {
        starts.push({ result: step.value, history });
        break;
      }
      history.push(step.value);
      const it = step.value.iteration;
      fraction = Math.max(fraction, (r + 0.1 + 0.9 * (it / (it + 15))) / stages);
      yield { phase: it === 0 ? 'seed' : 'mean', restart: r, restarts, iteration: it, moved: step.value.moved, objectiveKm2: Number.NaN, fraction };
    }
  }
  return yield* finishSteps(input, prepared, starts, prepared.sampled ? undefined : startEngine);
}

/** What the starts run on, and the settings with their defaults filled in. */
export interface PreparedStarts {
  readonly k: number;
  readonly seed: number;
  readonly restarts: number;
  readonly maxIterations: number;
  readonly rule: 'arc' | 'mean';
  readonly startInput: SolveInput;
  readonly sampled: boolean;
  /** Progress-bar stages: one per start, and shares for the continuation and refinement. */
  readonly stages: number;
}

/** A start's result with its iteration records. */
export interface StartOutcome {
  readonly result: StartResult;
  readonly history: readonly IterationRecord[];
}

/** Checks the input and settings and draws the sample the starts run on (if any). */
export function prepareStarts(input: SolveInput, settings: SolveSettings): PreparedStarts {
  checkSolve(input, settings);
  const n = input.demand.length;
  const k = settings.zones;
  const seed = settings.seed ?? 1;
  const restarts = settings.restarts ?? DEFAULT_RESTARTS;
  const maxIterations = settings.maxIterations ?? DEFAULT_MAX_ITERATIONS;
  const rule = settings.centre ?? 'arc';
  const sampleStops = settings.sampleStops ?? defaultSampleStops(k);
  let startInput: SolveInput = input;
  if (sampleStops > 0 && n > 2 * sampleStops) {
    const sample = drawSample(input, sampleStops, new Random(seed, SAMPLE_STREAM));
    if (countDistinctUpTo(sample.units, k) >= k) startInput = sample;
  }
  const sampled = startInput !== input;
  const stages = restarts + (sampled ? 1.5 : 0) + (rule === 'arc' ? 0.5 : 0);
  return { k, seed, restarts, maxIterations, rule, startInput, sampled, stages };
}

/**
 * After the starts (run here or elsewhere, in any order): keeps the best, continues it on every
 * stop when the starts ran on a sample, refines it for the 'arc' rule, and assembles the result.
 * `engine` may pass the engine the starts ran in when they ran on every stop here.
 */
export function* finishSteps(
  input: SolveInput,
  prepared: PreparedStarts,
  starts: readonly StartOutcome[],
  engine?: ZoneEngine,
): Generator<SolveProgress, SolveResult, void> {
  const { units, demand } = input;
  const n = demand.length;
  const { k, seed, restarts, maxIterations, rule, sampled, stages } = prepared;
  const ordered = [...starts].sort((a, b) => a.result.restart - b.result.restart);
  const history: IterationRecord[] = [];
  for (const s of ordered) history.push(...s.history);
  let best = ordered[0]!.result;
  for (const s of ordered) if (s.result.objectiveKm2 < best.objectiveKm2) best = s.result;
  let fraction = restarts / stages;
  const progress = (p: Omit<SolveProgress, 'fraction' | 'restarts'>, f: number): SolveProgress => {
    fraction = Math.max(fraction, Math.min(1, f));
    return { ...p, restarts, fraction };
  };

  let result: StartResult = best;
  const full = engine ?? new ZoneEngine(units, demand, k);
  if (sampled) {
    const guess = guessAssignment(units, best.centres);
    full.start(best.centres, guess);
    // Make the guess exact before the first centre update, which trusts the assignment.
    const first = full.assign();
    history.push({
      restart: best.restart,
      iteration: 0,
      phase: 'mean',
      stops: n,
      moved: first.moved,
      phaseObjectiveKm2: full.chordObjectiveFromSums(),
      distanceEvaluations: first.evaluations,
    });
    const run = runLloyd(full, best.restart, maxIterations, 0);
    for (;;) {
      const step = run.next();
      if (step.done) {
        result = step.value;
        break;
      }
      history.push(step.value);
      const it = step.value.iteration;
      yield progress(
        { phase: 'mean', restart: best.restart, iteration: it, moved: step.value.moved, objectiveKm2: Number.NaN },
        (restarts + 1.5 * (it / (it + 20))) / stages,
      );
    }
  }
  if (rule === 'arc') {
    const refine = refineArc(full, result);
    for (let round = 1; ; round++) {
      const step = refine.next();
      if (step.done) {
        result = step.value;
        break;
      }
      history.push(step.value);
      yield progress(
        { phase: 'arc', restart: best.restart, iteration: step.value.iteration, moved: step.value.moved, objectiveKm2: step.value.objectiveKm2 ?? Number.NaN },
        (stages - 0.5 + 0.5 * (round / (round + 3))) / stages,
      );
    }
  }
  let evaluations = 0;
  let naive = 0;
  let reseeded = 0;
  let iterations = 0;
  for (const h of history) {
    evaluations += h.distanceEvaluations;
    if (h.iteration > 0) naive += h.stops * k;
    if (h.restart === best.restart && h.iteration > 0 && h.stops === n) iterations++;
  }
  for (const s of ordered) reseeded += s.result.reseeded;

  yield progress({ phase: 'done', restart: best.restart, iteration: iterations, moved: 0, objectiveKm2: result.objectiveKm2 }, 1);
  return {
    zones: k,
    centres: result.centres,
    assignment: result.assignment,
    objectiveKm2: result.objectiveKm2,
    iterations,
    converged: result.converged,
    bestRestart: best.restart,
    restartObjectivesKm2: ordered.map((s) => s.result.objectiveKm2),
    startStops: prepared.startInput.demand.length,
    seed,
    reseeded,
    history,
    distanceEvaluations: evaluations,
    naiveDistanceEvaluations: naive,
  };
}

/**
 * Runs one start on its own (for a worker thread): the same result as the start of that number
 * inside solveSteps.
 */
export function runStartAlone(startInput: SolveInput, k: number, seed: number, restart: number, maxIterations: number): StartOutcome {
  const engine = new ZoneEngine(startInput.units, startInput.demand, k);
  const scratch = seedScratch(startInput.demand.length);
  const history: IterationRecord[] = [];
  const run = runStart(engine, scratch, seed, restart, maxIterations);
  for (;;) {
    const step = run.next();
    if (step.done) return { result: step.value, history };
    history.push(step.value);
  }
}

/** A uniform sample of `size` distinct stops (partial Fisher-Yates), in their original order. */
function drawSample(input: SolveInput, size: number, rng: Random): SolveInput {
  const n = input.demand.length;
  const pool = new Int32Array(n);
  for (let i = 0; i < n; i++) pool[i] = i;
  for (let s = 0; s < size; s++) {
    const j = s + rng.nextInt(n - s);
    const t = pool[s]!;
    pool[s] = pool[j]!;
    pool[j] = t;
  }
  const chosen = pool.subarray(0, size).sort();
  const units = new Float64Array(3 * size);
  const demand = new Float64Array(size);
  for (let s = 0; s < size; s++) {
    const i = chosen[s]!;
    units[3 * s] = input.units[3 * i]!;
    units[3 * s + 1] = input.units[3 * i + 1]!;
    units[3 * s + 2] = input.units[3 * i + 2]!;
    demand[s] = input.demand[i]!;
  }
  return { units, demand };
}

/**
 * One start: weighted k-means++ seeds from the stream (seed, restart), then Lloyd iterations.
 * Yields a record per iteration (iteration 0: seeding done). Independent of every other start,
 * so starts can run in any order, or in parallel, and give the same results.
 */
export function* runStart(
  engine: ZoneEngine,
  scratch: SeedScratch,
  seed: number,
  restart: number,
  maxIterations: number,
): Generator<IterationRecord, StartResult, void> {
  const { n, k, units, demand } = engine;
  const centres = new Float64Array(3 * k);
  seedCentres(units, demand, k, new Random(seed, restart), centres, scratch);
  engine.start(centres, scratch.nearest, scratch.nearestChord2);
  yield { restart, iteration: 0, phase: 'mean', stops: n, moved: n, phaseObjectiveKm2: engine.chordObjectiveFromSums(), distanceEvaluations: n * k };
  return yield* runLloyd(engine, restart, maxIterations, 0);
}

/**
 * Lloyd iterations from the engine's current centres and assignment: centres to their zones'
 * vector means, stops to their nearest centre, until no stop changes zone (converged) or the cap.
 */
export function* runLloyd(
  engine: ZoneEngine,
  restart: number,
  maxIterations: number,
  firstIteration: number,
): Generator<IterationRecord, StartResult, void> {
  const { n } = engine;
  let converged = false;
  let done = 0;
  let evaluations = 0;
  let reseeded = 0;
  for (let step = 1; step <= maxIterations; step++) {
    const empty = engine.updateCentres();
    if (empty.length > 0) reseeded += engine.reseed(empty);
    const pass = engine.assign();
    evaluations += pass.evaluations;
    done = step;
    yield {
      restart,
      iteration: firstIteration + step,
      phase: 'mean',
      stops: n,
      moved: pass.moved,
      phaseObjectiveKm2: engine.chordObjectiveFromSums(),
      distanceEvaluations: pass.evaluations,
    };
    if (pass.moved === 0 && empty.length === 0) {
      converged = true;
      break;
    }
  }
  // The last assignment was made against the centres before it; move them to their zones'
  // means once more so that centres and assignment agree (no move at all when converged).
  engine.updateCentres();
  const totals = engine.evaluate();
  return {
    restart,
    centres: engine.centres(),
    assignment: engine.assignment.slice(),
    objectiveKm2: totals.objectiveKm2,
    iterations: done,
    converged,
    reseeded,
    distanceEvaluations: evaluations,
    naiveDistanceEvaluations: done * n * engine.k,
  };
}

/**
 * Refinement for the great-circle objective: every centre steps towards its zone's Karcher mean,
 * stops are reassigned, until no stop moves and no centre moves more than ARC_TOLERANCE. Both
 * steps never raise the objective, so it falls monotonically.
 */
export function* refineArc(engine: ZoneEngine, from: StartResult): Generator<IterationRecord, StartResult, void> {
  const { n, k } = engine;
  engine.start(from.centres, from.assignment);
  let iteration = from.iterations;
  let evaluations = 0;
  let converged = false;
  let rounds = 0;
  for (let round = 1; round <= ARC_ROUNDS; round++) {
    const before = engine.evaluate().objectiveKm2;
    const moveChord = engine.karcherStep();
    const pass = engine.assign();
    evaluations += pass.evaluations;
    iteration++;
    rounds++;
    yield {
      restart: from.restart,
      iteration,
      phase: 'arc',
      stops: n,
      moved: pass.moved,
      objectiveKm2: before,
      phaseObjectiveKm2: before,
      distanceEvaluations: pass.evaluations,
    };
    if (pass.moved === 0 && moveChord < ARC_TOLERANCE) {
      converged = true;
      break;
    }
  }
  const totals = engine.evaluate();
  if (!(totals.objectiveKm2 <= from.objectiveKm2)) return from;
  return {
    restart: from.restart,
    centres: engine.centres(),
    assignment: engine.assignment.slice(),
    objectiveKm2: totals.objectiveKm2,
    iterations: iteration,
    converged: from.converged && converged,
    reseeded: 0,
    distanceEvaluations: evaluations,
    naiveDistanceEvaluations: rounds * n * k,
  };
}

/** Runs the solve to the end, synchronously. */
export function solveZones(input: SolveInput, settings: SolveSettings): SolveResult {
  const steps = solveSteps(input, settings);
  for (;;) {
    const r = steps.next();
    if (r.done) return r.value;
  }
}

export type SolveHooks = DriveHooks;

/** Runs the solve with progress reports and cancellation (see drive). */
export async function solveZonesAsync(input: SolveInput, settings: SolveSettings, hooks: SolveHooks = {}): Promise<SolveResult> {
  if (hooks.signal?.aborted) throw new SolveError('the plan run was cancelled; nothing was changed', 'cancelled');
  return drive(solveSteps(input, settings), hooks);
}
