import { readStopsFile } from '../io/read.js';
import type { StopSet } from '../io/stopset.js';
import { writeFilesAtomic } from '../io/atomic.js';
import path from 'node:path';
import type { MultiPolygon, Polygon } from 'geojson';
import { planGeoJsonChunks, layerGeoJsonChunks, DISTANCE_NOTE, type PlanLayers } from '../io/plan-geojson.js';
import { zoneBoundaries, type Boundaries } from '../zones/boundaries.js';
import { planStatistics } from '../zones/report.js';
import { assignmentsCsvChunks } from '../io/assignments-csv.js';
import { readCapacityFile, readDepotsFile, readLocksFile, type DepotSet, type ZoneNames } from '../io/zone-files.js';
import { solveZonesParallel } from '../run/parallel-solve.js';
import { drive } from '../solve/drive.js';
import { solveLimitedSteps, type LimitedResult } from '../solve/limited.js';
import { hasLimits, zoneBounds, zonesForCapacity, type LimitSettings } from '../solve/limits.js';
import { planFromSolve, type Plan } from '../solve/plan.js';
import { SolveError, type SolveProgress, type SolveResult, type SolveSettings } from '../solve/types.js';
import { planFigures, type PlanFigures } from '../zones/stats.js';
import { checkReport } from './report.js';
import type { CheckReport, LimitsOutcome, PlanProgressEvent, PlanReport, PlanSettingsInput, StopFileOptions, ZoneRow } from './types.js';

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
  /** 1 for zones whose centre is a fixed depot, when manual pins and unpins decide it (an edited plan); else the plan's first fixedZones are. */
  readonly pinned?: Uint8Array;
}

function solveSettings(s: PlanSettingsInput, zones: number): SolveSettings {
  const out: { -readonly [K in keyof SolveSettings]: SolveSettings[K] } = { zones };
  if (s.seed !== undefined) out.seed = s.seed;
  if (s.restarts !== undefined) out.restarts = s.restarts;
  if (s.maxIterations !== undefined) out.maxIterations = s.maxIterations;
  if (s.centre !== undefined) out.centre = s.centre;
  if (s.sampleStops !== undefined) out.sampleStops = s.sampleStops;
  return out;
}

/** Zone limits, depots and locks, read and put together for K zones. */
interface ZoneSetup {
  readonly limits: LimitSettings | undefined;
  readonly depots: DepotSet | null;
  readonly locked: Int32Array | null;
  readonly names: (string | null)[];
}

/** Capacity per zone: the uniform one, then the depot file's, then the capacity file's. */
function zoneCapacities(settings: PlanSettingsInput, k: number, depots: DepotSet | null): number[] {
  const names: ZoneNames = { count: k, depotIds: depots?.ids ?? [] };
  const capacity: number[] = new Array(k).fill(settings.capacity ?? Infinity);
  depots?.capacity.forEach((c, j) => {
    if (c !== null && j < k) capacity[j] = c;
  });
  if (settings.capacityFile) {
    readCapacityFile(settings.capacityFile, names).forEach((c, j) => {
      if (c !== null) capacity[j] = c;
    });
  }
  return capacity;
}

function zoneSetup(stops: StopSet, settings: PlanSettingsInput, k: number, depots: DepotSet | null): ZoneSetup {
  const f = depots?.ids.length ?? 0;
  if (f > k) throw new SolveError(`${f} depots in ${depots!.source}, but only ${k} zone${k === 1 ? '' : 's'}: every depot is a zone, so ask for at least ${f}`, 'zones');
  const names: ZoneNames = { count: k, depotIds: depots?.ids ?? [] };
  const capacity = zoneCapacities(settings, k, depots);
  const limits: { -readonly [K in keyof LimitSettings]: LimitSettings[K] } = {};
  if (capacity.some((c) => Number.isFinite(c))) limits.capacity = capacity;
  if (settings.balance !== undefined) limits.balance = settings.balance;
  if (settings.minStops !== undefined) limits.minStops = settings.minStops;
  if (settings.maxStops !== undefined) limits.maxStops = settings.maxStops;
  const locked = settings.locksFile ? readLocksFile(settings.locksFile, stops.ids, names) : null;
  const zoneNames: (string | null)[] = Array.from({ length: k }, (_, j) => depots?.ids[j] ?? null);
  return { limits: hasLimits(limits) ? limits : undefined, depots, locked, names: zoneNames };
}

/** Solves a plan for stops already read. Throws SolveError for impossible settings. */
export async function solveStops(stops: StopSet, settings: PlanSettingsInput, hooks: RunHooks = {}): Promise<SolvedPlan> {
  const depots = settings.depotsFile ? readDepotsFile(settings.depotsFile) : null;
  let k: number;
  if (settings.zones === 'auto') {
    if (!(settings.capacity !== undefined && settings.capacity > 0)) {
      throw new SolveError("zones 'auto' needs a capacity (--capacity Q): the fewest zones of that capacity that carry the total demand", 'settings');
    }
    // The fewest zones whose capacities (the depots' and the capacity file's where given, the
    // uniform one elsewhere) add up to the total demand.
    let total = 0;
    for (let i = 0; i < stops.demand.length; i++) total += stops.demand[i]!;
    k = Math.max(zonesForCapacity(stops.demand, settings.capacity), depots?.ids.length ?? 0, 1);
    for (;;) {
      const sum = zoneCapacities(settings, k, depots).reduce((a, c) => a + c, 0);
      if (sum >= total * (1 - 1e-12) || k >= stops.demand.length) break;
      k++;
    }
  } else k = settings.zones;
  // With 'auto', whole stops may not pack into the LP's number of zones: try a few more.
  for (let extra = 0; ; extra++) {
    const solved = await solveFor(stops, settings, k + extra, depots, hooks);
    const limits = (solved.result as LimitedResult).limits;
    if (settings.zones !== 'auto' || !limits || limits.feasible || extra >= 3) return solved;
  }
}

async function solveFor(stops: StopSet, settings: PlanSettingsInput, k: number, depots: DepotSet | null, hooks: RunHooks): Promise<SolvedPlan> {
  const s = solveSettings(settings, k);
  const setup = zoneSetup(stops, settings, k, depots);
  const input = { units: stops.units, demand: stops.demand };
  const progress = (p: SolveProgress): void =>
    hooks.onProgress?.({ phase: p.phase, fraction: p.fraction, restart: p.restart, iteration: p.iteration, moved: p.moved });
  const driveHooks = { onProgress: progress, ...(hooks.signal ? { signal: hooks.signal } : {}) };
  const special = !!setup.limits || !!setup.depots || !!setup.locked;
  // Settings that cannot be met get their answer before any solving.
  if (setup.limits) zoneBounds(setup.limits, k, stops.demand, setup.locked, (i) => `stop "${stops.ids[i]}"`);
  let result: SolveResult | LimitedResult;
  const plainFirst = !setup.depots && !setup.locked;
  const start = !special || plainFirst
    ? await solveZonesParallel(input, s, {
        ...(hooks.signal ? { signal: hooks.signal } : {}),
        ...(settings.threads !== undefined ? { threads: settings.threads } : {}),
        onProgress: (p) => progress(special ? { ...p, fraction: p.fraction * 0.4, phase: p.phase === 'done' ? 'mean' : p.phase } : p),
      })
    : null;
  if (!special) result = start!;
  else {
    result = await drive(
      solveLimitedSteps(
        input,
        {
          ...s,
          ...(setup.limits ? { limits: setup.limits } : {}),
          ...(setup.depots ? { fixedCentres: setup.depots.units } : {}),
          ...(setup.locked ? { locked: setup.locked } : {}),
          stopIds: stops.ids,
        },
        start ?? undefined,
      ),
      driveHooks,
    );
  }
  const plan = planFromSolve(result, s, { zoneNames: setup.names, locked: setup.locked, limitSettings: setup.limits ?? null });
  const figures = planFigures(stops.units, stops.demand, plan.centres, plan.assignment);
  return { stops, plan, result, figures };
}

export function zoneRows(plan: Plan, figures: PlanFigures): ZoneRow[] {
  const bounds = plan.limits?.bounds;
  const breaking = new Set(plan.limits?.violations.map((v) => v.zone) ?? []);
  return figures.zones.map((z) => {
    const max = bounds && Number.isFinite(bounds.maxDemand[z.zone]!) ? bounds.maxDemand[z.zone]! : null;
    const min = bounds && bounds.minDemand[z.zone]! > 0 ? bounds.minDemand[z.zone]! : null;
    return {
      zone: plan.zoneIds[z.zone]!,
      name: plan.zoneNames[z.zone] ?? null,
      fixed: z.zone < plan.fixedZones,
      centre: [z.centreLon, z.centreLat],
      stops: z.stops,
      demand: z.demand,
      maxDemand: max,
      minDemand: min,
      utilisation: max !== null && max > 0 ? z.demand / max : null,
      breaksLimits: breaking.has(z.zone),
      meanKm: z.meanKm,
      maxKm: z.maxKm,
      objectiveKm2: z.objectiveKm2,
    };
  });
}

export function limitsOutcome(plan: Plan): LimitsOutcome | null {
  const l = plan.limits;
  if (!l) return null;
  return {
    lowerBoundKm2: l.blocked ? null : l.lowerBoundKm2,
    gap: l.blocked ? null : l.gap,
    feasible: l.feasible,
    breaches: l.violations.map((v) => ({ zone: plan.zoneIds[v.zone]!, kind: v.kind, load: v.load, bound: v.bound, by: v.by })),
    split: l.split,
    repaired: l.repaired,
    notes: l.notes.map((n) => n.message),
  };
}

/** How zone boundaries are drawn for output. */
export interface BoundarySettings {
  /** Draw them at all (default true). */
  readonly boundaries?: boolean;
  readonly marginKm?: number;
  readonly serviceArea?: Polygon | MultiPolygon;
}

/**
 * A solve result stand-in for a plan that was not just solved (read back from a file, or made by
 * a rebalance), for the writers and reports: the plan's own figures, no start history.
 */
export function resultOfPlan(plan: Plan, objectiveKm2 = plan.objectiveKm2): SolvedPlan['result'] {
  return {
    zones: plan.zoneIds.length,
    centres: plan.centres,
    assignment: plan.assignment,
    objectiveKm2,
    iterations: plan.iterations,
    converged: plan.converged,
    bestRestart: 0,
    restartObjectivesKm2: [],
    startStops: plan.assignment.length,
    seed: plan.settings.seed ?? 1,
    reseeded: 0,
    history: [],
    distanceEvaluations: 0,
    naiveDistanceEvaluations: 0,
  };
}

/**
 * The plan with its statistics and zone boundaries, for writing or showing. Boundaries that
 * cannot be drawn (stops over more than a hemisphere, or a fault in drawing them) are left out
 * with a note; the plan itself is still there.
 */
export function planLayers(solved: SolvedPlan, settings: BoundarySettings = {}): PlanLayers & { notes: string[] } {
  const { stops, plan } = solved;
  const notes: string[] = [];
  let boundaries: Boundaries | null = null;
  if (settings.boundaries !== false) {
    try {
      boundaries = zoneBoundaries(stops.units, plan.assignment, plan.zoneIds.length, {
        ...(settings.marginKm !== undefined ? { marginKm: settings.marginKm } : {}),
        ...(settings.serviceArea ? { serviceArea: settings.serviceArea } : {}),
      });
    } catch (e) {
      // RangeError: stops that cannot be drawn (over a hemisphere). Any other fault in drawing
      // (a geometry library refusing a ring) must not cost the solved plan either: it is
      // written without zone polygons, and the note says that this is a fault to report.
      if (!(e instanceof Error)) throw e;
      notes.push(e instanceof RangeError ? `zone boundaries not drawn: ${e.message}` : `zone boundaries not drawn (an internal fault, please report it): ${e.message}`);
    }
  }
  const stats = planStatistics(stops.units, stops.demand, stops.lonLat, plan.centres, plan.assignment, boundaries, plan.limits?.bounds.maxDemand ?? null);
  if (boundaries && boundaries.outside.length > 0) {
    notes.push(`${boundaries.outside.length} stop${boundaries.outside.length === 1 ? ' lies' : 's lie'} in another zone's territory (locks, capacity or small detached parts); they are marked outsideZone in the stops`);
  }
  if (boundaries && boundaries.beyondArea.length > 0) notes.push(`${boundaries.beyondArea.length} stop${boundaries.beyondArea.length === 1 ? ' lies' : 's lie'} outside the service area (in no zone's polygon; marked outsideZone in the stops too)`);
  return { stops, plan, stats, boundaries, notes, fixed: solved.pinned ?? null };
}

/**
 * Writes the plan GeoJSON and/or assignments CSV, together all or nothing (a failure leaves
 * neither half-written nor one without the other). Returns notes on the boundaries.
 */
export function writePlanFiles(solved: SolvedPlan, out: { geojson?: string; assignments?: string }, settings: BoundarySettings = {}): string[] {
  const files: { target: string; chunks: Iterable<string> }[] = [];
  let notes: string[] = [];
  if (out.geojson) {
    const layers = planLayers(solved, settings);
    files.push({ target: out.geojson, chunks: planGeoJsonChunks(layers) });
    notes = layers.notes;
  }
  if (out.assignments) files.push({ target: out.assignments, chunks: assignmentsCsvChunks(solved.stops, solved.plan, solved.figures) });
  writeFilesAtomic(files);
  return notes;
}

/** Writes the separate layers (zones, centres, stops GeoJSON, assignments CSV) into a folder, together all or nothing. */
export function writePlanLayers(solved: SolvedPlan, dir: string, settings: BoundarySettings = {}): { files: string[]; notes: string[] } {
  const layers = planLayers(solved, settings);
  const out: { target: string; chunks: Iterable<string> }[] = [];
  for (const layer of ['zones', 'centres', 'stops'] as const) {
    if (layer === 'zones' && !layers.boundaries) continue;
    out.push({ target: path.join(dir, `${layer}.geojson`), chunks: layerGeoJsonChunks(layers, layer) });
  }
  out.push({ target: path.join(dir, 'assignments.csv'), chunks: assignmentsCsvChunks(solved.stops, solved.plan, solved.figures) });
  writeFilesAtomic(out);
  return { files: out.map((f) => f.target), notes: layers.notes };
}

/** The main job: read stops, plan K zones, write the plan files, report. */
export async function planStopsFile(
  file: string,
  read: StopFileOptions,
  settings: PlanSettingsInput,
  out: { geojson?: string; assignments?: string } = {},
  hooks: RunHooks = {},
  boundarySettings: BoundarySettings = {},
): Promise<PlanReport> {
  const t0 = performance.now();
  hooks.onProgress?.({ phase: 'read', fraction: 0 });
  const stops = readStopsFile(file, read);
  const t1 = performance.now();
  const solved = await solveStops(stops, settings, hooks);
  const t2 = performance.now();
  hooks.onProgress?.({ phase: 'write', fraction: 1 });
  const notes = writePlanFiles(solved, out, boundarySettings);
  const t3 = performance.now();
  return { ...planReport(solved, { readMs: t1 - t0, solveMs: t2 - t1, writeMs: t3 - t2 }, out), notes };
}

export function planReport(solved: SolvedPlan, timings: PlanReport['timings'], out: { geojson?: string; assignments?: string } = {}): PlanReport {
  const { result, plan, figures, stops } = solved;
  let locked = 0;
  if (plan.locked) for (let i = 0; i < plan.locked.length; i++) if (plan.locked[i]! >= 0) locked++;
  return {
    input: checkReport(stops),
    limits: limitsOutcome(plan),
    fixedZones: plan.fixedZones,
    lockedStops: locked,
    zones: zoneRows(plan, figures),
    objectiveKm2: figures.objectiveKm2,
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
    timings,
    notes: [],
    distanceNote: DISTANCE_NOTE,
  };
}
