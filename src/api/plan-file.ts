import { readStopsFile } from '../io/read.js';
import type { StopSet } from '../io/stopset.js';
import { writeFileAtomic } from '../io/atomic.js';
import { planGeoJsonChunks, DISTANCE_NOTE } from '../io/plan-geojson.js';
import { assignmentsCsvChunks } from '../io/assignments-csv.js';
import { solveZonesParallel } from '../run/parallel-solve.js';
import { planFromSolve, type Plan } from '../solve/plan.js';
import type { SolveResult, SolveSettings } from '../solve/types.js';
import { planFigures, type PlanFigures } from '../zones/stats.js';
import { checkReport } from './report.js';
import type { CheckReport, PlanProgressEvent, PlanReport, PlanSettingsInput, StopFileOptions, ZoneRow } from './types.js';

export interface RunHooks {
  readonly onProgress?: (e: PlanProgressEvent) => void;
  readonly signal?: AbortSignal;
}

/** Reads and validates a stops file; throws ImportError (naming file, row, field) when it is bad. */
export async function checkStopsFile(file: string, options: StopFileOptions = {}): Promise<CheckReport> {
  return checkReport(readStopsFile(file, options));
}

/** A solved plan with everything needed to show or write it. */
export interface SolvedPlan {
  readonly stops: StopSet;
  readonly plan: Plan;
  readonly result: SolveResult;
  readonly figures: PlanFigures;
}

function solveSettings(s: PlanSettingsInput): SolveSettings {
  const out: { -readonly [K in keyof SolveSettings]: SolveSettings[K] } = { zones: s.zones };
  if (s.seed !== undefined) out.seed = s.seed;
  if (s.restarts !== undefined) out.restarts = s.restarts;
  if (s.maxIterations !== undefined) out.maxIterations = s.maxIterations;
  if (s.centre !== undefined) out.centre = s.centre;
  if (s.sampleStops !== undefined) out.sampleStops = s.sampleStops;
  return out;
}

/** Solves a plan for stops already read. Throws SolveError for impossible settings. */
export async function solveStops(stops: StopSet, settings: PlanSettingsInput, hooks: RunHooks = {}): Promise<SolvedPlan> {
  const s = solveSettings(settings);
  const result = await solveZonesParallel({ units: stops.units, demand: stops.demand }, s, {
    ...(hooks.signal ? { signal: hooks.signal } : {}),
    ...(settings.threads !== undefined ? { threads: settings.threads } : {}),
    onProgress: (p) =>
      hooks.onProgress?.({
        phase: p.phase,
        fraction: p.fraction,
        restart: p.restart,
        iteration: p.iteration,
        moved: p.moved,
      }),
  });
  const plan = planFromSolve(result, s);
  const figures = planFigures(stops.units, stops.demand, plan.centres, plan.assignment);
  return { stops, plan, result, figures };
}

export function zoneRows(plan: Plan, figures: PlanFigures): ZoneRow[] {
  return figures.zones.map((z) => ({
    zone: plan.zoneIds[z.zone]!,
    centre: [z.centreLon, z.centreLat],
    stops: z.stops,
    demand: z.demand,
    meanKm: z.meanKm,
    maxKm: z.maxKm,
    objectiveKm2: z.objectiveKm2,
  }));
}

/** Writes the plan GeoJSON and/or assignments CSV, each all or nothing. */
export function writePlanFiles(solved: SolvedPlan, out: { geojson?: string; assignments?: string }): void {
  if (out.geojson) writeFileAtomic(out.geojson, planGeoJsonChunks(solved.stops, solved.plan, solved.figures));
  if (out.assignments) writeFileAtomic(out.assignments, assignmentsCsvChunks(solved.stops, solved.plan, solved.figures));
}

/** The main job: read stops, plan K zones, write the plan files, report. */
export async function planStopsFile(
  file: string,
  read: StopFileOptions,
  settings: PlanSettingsInput,
  out: { geojson?: string; assignments?: string } = {},
  hooks: RunHooks = {},
): Promise<PlanReport> {
  const t0 = performance.now();
  hooks.onProgress?.({ phase: 'read', fraction: 0 });
  const stops = readStopsFile(file, read);
  const t1 = performance.now();
  const solved = await solveStops(stops, settings, hooks);
  const t2 = performance.now();
  hooks.onProgress?.({ phase: 'write', fraction: 1 });
  writePlanFiles(solved, out);
  const t3 = performance.now();
  const { result, plan, figures } = solved;
  return {
    input: checkReport(stops),
    zones: zoneRows(plan, figures),
    objectiveKm2: result.objectiveKm2,
    iterations: result.iterations,
    converged: result.converged,
    seed: result.seed,
    restarts: result.restartObjectivesKm2.length,
    bestRestart: result.bestRestart,
    restartObjectivesKm2: result.restartObjectivesKm2,
    startStops: result.startStops,
    reseeded: result.reseeded,
    distanceShare: result.naiveDistanceEvaluations > 0 ? result.distanceEvaluations / result.naiveDistanceEvaluations : 0,
    files: { ...(out.geojson ? { geojson: out.geojson } : {}), ...(out.assignments ? { assignments: out.assignments } : {}) },
    timings: { readMs: t1 - t0, solveMs: t2 - t1, writeMs: t3 - t2 },
    distanceNote: DISTANCE_NOTE,
  };
}
