/**
 * The stops the engine clusters: positions as unit vectors and the workload of each.
 * Pure data in typed arrays; ids and source rows stay with the caller (see io/StopSet).
 */
export interface SolveInput {
  /** Unit vectors, interleaved x0 y0 z0 x1 y1 z1 ...; length 3n. */
  readonly units: Float64Array;
  /** Workload per stop (parcels, service minutes, ...), finite and >= 0; length n. */
  readonly demand: Float64Array;
}

/** How centres are placed on the sphere once the stops of a zone are known. */
export type CentreRule =
  /** Demand-weighted mean of unit vectors, normalised (minimises squared chord length). */
  | 'mean'
  /** Then refined to the weighted Karcher mean (minimises squared great-circle distance, the reported objective). */
  | 'arc';

export interface SolveSettings {
  /** Number of zones K (>= 1). */
  readonly zones: number;
  /** Seed of the pseudo-random generator; the same input, settings and seed give the same plan. Default 1. */
  readonly seed?: number;
  /** Independent k-means++ starts; the best objective is kept. Default 4. */
  readonly restarts?: number;
  /** Iteration cap per start; a run that reaches it is reported as not converged. Default 300. */
  readonly maxIterations?: number;
  /** Centre rule, default 'arc'. */
  readonly centre?: CentreRule;
  /**
   * With more than twice this many stops, the starts are compared on a uniform sample of this
   * many stops and only the best start continues on every stop. 0: every start on every stop.
   * Default max(100 000, 250 x zones).
   */
  readonly sampleStops?: number;
}

/** One iteration of the assignment / centre-update loop. */
export interface IterationRecord {
  readonly restart: number;
  readonly iteration: number;
  /**
   * 'mean': Lloyd steps with vector-mean centres; 'arc': Karcher refinement of the chosen start;
   * 'limits': the workload-limited loop (objectiveKm2 is then its LP relaxation's objective).
   */
  readonly phase: 'mean' | 'arc' | 'limits';
  /** Stops this iteration ran on: all of them, or the sample the starts are compared on. */
  readonly stops: number;
  /** Stops that changed zone in this iteration's assignment step. */
  readonly moved: number;
  /**
   * Sum of demand x (great-circle km to the centre)^2 of the assignment entering this iteration,
   * where computed (phase 'arc').
   */
  readonly objectiveKm2?: number;
  /**
   * The quantity the phase minimises exactly, never rising from one iteration to the next:
   * in phase 'mean' the sum of demand x (chord km)^2 of this iteration's assignment against the
   * centres it was made with (from the zone sums as 2 R^2 (W - c . S), which cancels: its rounding
   * is a few times 1e-16 x total demand x R^2, about 1e-8 km^2 per unit of demand, so about 1e-9
   * relative only for zones tens of km across, and worse for compact ones); in phase 'arc'
   * objectiveKm2.
   */
  readonly phaseObjectiveKm2: number;
  /** Stop-centre distances computed in the assignment step (a full scan would need n x K). */
  readonly distanceEvaluations: number;
}

export interface SolveProgress {
  readonly phase: 'seed' | 'mean' | 'arc' | 'done';
  readonly restart: number;
  readonly restarts: number;
  readonly iteration: number;
  readonly moved: number;
  readonly objectiveKm2: number;
  /** Rough fraction done, 0..1, for a progress bar. */
  readonly fraction: number;
}

/** The engine's result: centres, assignment and how it got there. */
export interface SolveResult {
  readonly zones: number;
  /** Unit vectors of the zone centres, interleaved; length 3K. */
  readonly centres: Float64Array;
  /** Zone index 0..K-1 of every stop. */
  readonly assignment: Int32Array;
  /** Sum over stops of demand x (great-circle km to its zone's centre)^2. */
  readonly objectiveKm2: number;
  /** Iterations on every stop of the kept start: its Lloyd iterations and the 'arc' refinement. */
  readonly iterations: number;
  /** True when the assignment stopped changing before the iteration cap. */
  readonly converged: boolean;
  /** Which start (0-based) was kept, and the objective each start reached before refinement. */
  readonly bestRestart: number;
  readonly restartObjectivesKm2: readonly number[];
  /** Stops the starts ran on: n, or the size of the sample (see SolveSettings.sampleStops). */
  readonly startStops: number;
  readonly seed: number;
  /** Zones that went empty and were re-seeded at the stop contributing most to the objective. */
  readonly reseeded: number;
  readonly history: readonly IterationRecord[];
  /** Stop-centre distance computations done, against n x K per assignment step without pruning. */
  readonly distanceEvaluations: number;
  readonly naiveDistanceEvaluations: number;
}

/** A problem with the settings or data that makes a solve impossible; the message says what to change. */
export class SolveError extends Error {
  constructor(
    message: string,
    readonly code: 'zones' | 'no-stops' | 'no-demand' | 'too-few-locations' | 'settings' | 'infeasible' | 'cancelled',
  ) {
    super(message);
    this.name = 'SolveError';
  }
}
