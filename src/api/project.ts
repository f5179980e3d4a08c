import path from 'node:path';
import pkg from '../../package.json' with { type: 'json' };
import { readStopsFile } from '../io/read.js';
import type { LimitedResult } from '../solve/limited.js';
import type { SolveResult } from '../solve/types.js';
import { planFigures } from '../zones/stats.js';
import { ProjectStore, ProjectError, lockHolder, lockedError, type EditToAdd, type StoredEdit, type StoredPlanInfo, type StoredStopSet, type ZoneStats } from '../store/index.js';
import { applyEdits, type EditedPlan } from './edited-plan.js';
import { planReport, solveStops, writePlanFiles, type BoundarySettings, type RunHooks, type SolvedPlan } from './plan-file.js';
import type {
  InputProblem,
  PlanEditInput,
  PlanEditRow,
  PlanReport,
  PlanSettingsInput,
  ProjectInfo,
  ProjectPlanRow,
  StopFileOptions,
  StopSetSummary,
} from './types.js';

/**
 * Projects: one SQLite file (.zoneplan) per project holding its stop sets, its plans (each save a
 * new named version) and the manual edits made to them. Plain async functions with plain-data
 * results, the same for the command line, a local HTTP server and the desktop window.
 *
 * File functions (listPlans(file), ...) open the file, do one thing and close it again. A window
 * keeps a project open with openProject(): that holds the file's write lock (another window or
 * process is told the file is in use), and the file functions called in the same process for
 * that file then use the open project instead of opening it again.
 *
 * Errors for the user: ProjectError (not a project, damaged, newer format, in use, no such plan,
 * a duplicate name, a bad edit) and WriteError (disk full, read-only place), each with a message
 * naming the file; nothing is half-saved (every save is one transaction).
 */

export const APP_VERSION = `zoneplan ${pkg.version}`;

/** A plan loaded from a project: everything writePlanFiles needs, and what was saved with it. */
export interface LoadedPlan extends SolvedPlan {
  readonly info: ProjectPlanRow;
  /** Per-zone figures as saved (null for plans from format 1); `figures` is recomputed from the arrays. */
  readonly zoneStats: ZoneStats | null;
  /** Zone boundaries (GeoJSON) as saved, or null. */
  readonly boundaries: unknown;
}

export interface SavePlanOptions {
  /** The saved plan this one was made from (a rebalance), by name. */
  readonly parent?: string;
  /** The settings as asked for, kept with the plan (re-runs, listings). */
  readonly request?: PlanSettingsInput;
  /** Zone boundaries as a GeoJSON object. */
  readonly boundaries?: unknown;
}

/** Open projects of this process, by resolved path. */
const open = new Map<string, ProjectHandle>();

function keyOf(file: string): string {
  return path.resolve(file);
}

/** Runs fn on the project open in this process (when it fits) or on the file opened for fn alone. */
function withStore<T>(file: string, write: boolean, fn: (store: ProjectStore) => T): T {
  const handle = open.get(keyOf(file));
  if (handle && (!write || handle.writable)) return fn(handle.store);
  const store = ProjectStore.open(file, { write });
  try {
    return fn(store);
  } finally {
    store.close();
  }
}

// ---- plain data out

function projectInfo(store: ProjectStore): ProjectInfo {
  const s = store.summary();
  return {
    file: s.file,
    formatVersion: s.schemaVersion,
    created: s.createdAt,
    createdBy: s.createdBy,
    stopSets: s.stopSets,
    plans: s.plans,
    edits: s.edits,
    migratedFrom: s.migratedFrom,
    backup: s.backup,
  };
}

function stopSetSummary(s: StoredStopSet): StopSetSummary {
  return { id: s.id, source: s.source, format: s.format, imported: s.importedAt, stops: s.stops, fields: s.fields, warnings: s.warnings.map((w): InputProblem => ({ ...w })) };
}

function fileName(f: string): string {
  return path.basename(f);
}

/** The settings in one line, from the request when it was saved, else from the engine settings. */
export function settingsLine(info: StoredPlanInfo): string {
  const r = (info.request ?? null) as PlanSettingsInput | null;
  const s = info.settings;
  const parts = [`${info.zones} zone${info.zones === 1 ? '' : 's'}${r?.zones === 'auto' ? ' (auto)' : ''}`];
  if (info.seed !== null) parts.push(`seed ${info.seed}`);
  const restarts = r?.restarts ?? s.restarts;
  if (restarts !== undefined) parts.push(`${restarts} start${restarts === 1 ? '' : 's'}`);
  const centre = r?.centre ?? s.centre;
  if (centre === 'mean') parts.push('mean centres');
  if (r?.capacity !== undefined) parts.push(`capacity ${r.capacity}`);
  if (r?.capacityFile) parts.push(`capacities ${fileName(r.capacityFile)}`);
  if (r?.balance !== undefined) parts.push(`balance ±${+(r.balance * 100).toFixed(3)}%`);
  if (r?.minStops !== undefined) parts.push(`min ${r.minStops} stops`);
  if (r?.maxStops !== undefined) parts.push(`max ${r.maxStops} stops`);
  if (r?.depotsFile) parts.push(`depots ${fileName(r.depotsFile)}`);
  else if (info.fixedZones > 0) parts.push(`${info.fixedZones} depots`);
  if (r?.locksFile) parts.push(`locks ${fileName(r.locksFile)}`);
  if (!r && info.feasible !== null) parts.push('limits');
  return parts.join(', ');
}

function planRow(info: StoredPlanInfo): ProjectPlanRow {
  return {
    name: info.name,
    created: info.createdAt,
    stops: info.stops,
    zones: info.zones,
    objectiveKm2: info.objectiveKm2,
    converged: info.converged,
    seed: info.seed,
    parent: info.parent,
    source: info.source,
    stopSet: info.stopSetId,
    settings: settingsLine(info),
    request: (info.request ?? null) as PlanSettingsInput | null,
    feasible: info.feasible,
    fixedZones: info.fixedZones,
    hasBoundaries: info.hasBoundaries,
    edits: info.edits,
  };
}

function editRow(e: StoredEdit, zoneIds: readonly number[]): PlanEditRow {
  const label = (z: number | null): number | null => (z === null ? null : (zoneIds[z] ?? z + 1));
  return {
    id: e.id,
    plan: e.plan,
    kind: e.kind,
    stopIndex: e.stopIndex,
    stopId: e.stopId,
    fromZone: label(e.fromZone),
    toZone: label(e.toZone),
    centre: e.lon !== null && e.lat !== null ? [e.lon, e.lat] : null,
    at: e.at,
  };
}

// ---- the operations, on an open store

function loadFrom(store: ProjectStore, name: string): LoadedPlan {
  const s = store.loadPlan(name);
  const { stops, plan, run } = s;
  const figures = planFigures(stops.units, stops.demand, plan.centres, plan.assignment);
  const result: SolveResult & Pick<LimitedResult, 'limits' | 'fixedZones'> = {
    zones: plan.zoneIds.length,
    centres: plan.centres,
    assignment: plan.assignment,
    objectiveKm2: plan.objectiveKm2,
    iterations: plan.iterations,
    converged: plan.converged,
    bestRestart: run?.bestRestart ?? 0,
    restartObjectivesKm2: run?.restartObjectivesKm2 ?? [],
    startStops: run?.startStops ?? stops.ids.length,
    seed: plan.settings.seed ?? 1,
    reseeded: run?.reseeded ?? 0,
    history: [],
    distanceEvaluations: run?.distanceEvaluations ?? 0,
    naiveDistanceEvaluations: run?.naiveDistanceEvaluations ?? 0,
    limits: plan.limits,
    fixedZones: plan.fixedZones,
  };
  return { stops, plan, result, figures, info: planRow(s.info), zoneStats: s.zoneStats, boundaries: s.boundaries };
}

function editFrom(store: ProjectStore, planName: string, edit: PlanEditInput): PlanEditRow {
  const info = store.planInfo(planName);
  const zoneIds = store.zoneIds(planName);
  const bad = (message: string): ProjectError => new ProjectError(message, 'bad-edit', store.file);
  const kinds = ['move', 'lock', 'unlock', 'pin-centre', 'unpin-centre'];
  if (!edit || typeof edit !== 'object' || !kinds.includes(edit.kind)) {
    throw bad(`an edit needs a kind: ${kinds.join(', ')}; got ${JSON.stringify((edit as { kind?: unknown } | null)?.kind)}`);
  }
  const add: { -readonly [K in keyof EditToAdd]: EditToAdd[K] } = { kind: edit.kind };
  const centre = edit.kind === 'pin-centre' || edit.kind === 'unpin-centre';
  if (!centre) {
    if (edit.stopId !== undefined) {
      if (typeof edit.stopId !== 'string') throw bad(`stopId must be a stop id (text), got ${JSON.stringify(edit.stopId)}`);
      const i = store.stopIndexOf(info.stopSetId, edit.stopId);
      if (i < 0) throw bad(`plan "${info.name}" has no stop with id ${JSON.stringify(edit.stopId)}`);
      if (edit.stopIndex !== undefined && edit.stopIndex !== i) throw bad(`stop id ${JSON.stringify(edit.stopId)} is stop index ${i}, not ${edit.stopIndex}`);
      add.stopIndex = i;
    } else if (edit.stopIndex !== undefined) add.stopIndex = edit.stopIndex;
    else throw bad(`a ${edit.kind} edit needs the stop: its stopId or stopIndex`);
  } else {
    if (edit.lon !== undefined) add.lon = edit.lon;
    if (edit.lat !== undefined) add.lat = edit.lat;
  }
  if (edit.zone !== undefined) {
    const z = zoneIds.indexOf(edit.zone);
    if (z < 0) throw bad(`plan "${info.name}" has no zone ${JSON.stringify(edit.zone)}; its zones are ${Math.min(...zoneIds)}..${Math.max(...zoneIds)}`);
    add.toZone = z;
  } else if (edit.kind === 'move' || centre) throw bad(`a ${edit.kind} edit needs the zone`);
  return editRow(store.appendEdit(planName, add), zoneIds);
}

// ---- one open project (a window)

/** A project kept open (by a window): holds the write lock until close(). */
export class ProjectHandle {
  /** @internal */
  constructor(readonly store: ProjectStore) {}

  get file(): string {
    return this.store.file;
  }

  get writable(): boolean {
    return this.store.writable;
  }

  async info(): Promise<ProjectInfo> {
    return projectInfo(this.store);
  }

  async importStops(stopsFile: string, read: StopFileOptions = {}): Promise<StopSetSummary> {
    return stopSetSummary(this.store.addStopSet(readStopsFile(stopsFile, read)));
  }

  async listStopSets(): Promise<StopSetSummary[]> {
    return this.store.listStopSets().map(stopSetSummary);
  }

  async savePlan(solved: SolvedPlan, name: string, options: SavePlanOptions = {}): Promise<ProjectPlanRow> {
    return planRow(this.store.savePlan(solved, name, options));
  }

  async listPlans(): Promise<ProjectPlanRow[]> {
    return this.store.listPlans().map(planRow);
  }

  async loadPlan(name: string): Promise<LoadedPlan> {
    return loadFrom(this.store, name);
  }

  async renamePlan(from: string, to: string): Promise<ProjectPlanRow> {
    return planRow(this.store.renamePlan(from, to));
  }

  async appendEdit(plan: string, edit: PlanEditInput): Promise<PlanEditRow> {
    return editFrom(this.store, plan, edit);
  }

  async listEdits(plan: string): Promise<PlanEditRow[]> {
    const zoneIds = this.store.zoneIds(plan);
    return this.store.listEdits(plan).map((e) => editRow(e, zoneIds));
  }

  async close(): Promise<void> {
    if (open.get(this.store.key) === this) open.delete(this.store.key);
    this.store.close();
  }
}

/**
 * Opens a project and keeps it open; for writing (the default) it takes the file's lock, and a
 * second window or process gets "FILE is open in another Zoneplan window (pid N)".
 */
export async function openProject(file: string, options: { readOnly?: boolean } = {}): Promise<ProjectHandle> {
  const handle = new ProjectHandle(ProjectStore.open(file, { write: !options.readOnly }));
  if (!open.has(handle.store.key) || handle.writable) open.set(handle.store.key, handle);
  return handle;
}

// ---- file functions

/** Makes a new, empty project file; refuses a file that exists. */
export async function createProject(file: string): Promise<ProjectInfo> {
  const store = ProjectStore.create(file, APP_VERSION);
  try {
    return projectInfo(store);
  } finally {
    store.close();
  }
}

export async function getProjectInfo(file: string): Promise<ProjectInfo> {
  return withStore(file, false, projectInfo);
}

/** Reads a stops file (errors as ImportError, nothing saved) and records it in the project as a new stop set. */
export async function importStopsToProject(file: string, stopsFile: string, read: StopFileOptions = {}): Promise<StopSetSummary> {
  // Open first: a project that cannot be written is reported before a long read.
  return withStore(file, true, (store) => stopSetSummary(store.addStopSet(readStopsFile(stopsFile, read))));
}

export async function listStopSets(file: string): Promise<StopSetSummary[]> {
  return withStore(file, false, (store) => store.listStopSets().map(stopSetSummary));
}

/** Saves a solved plan as a new version named `name` (unique in the project), in one transaction. */
export async function savePlanToProject(file: string, solved: SolvedPlan, name: string, options: SavePlanOptions = {}): Promise<ProjectPlanRow> {
  return withStore(file, true, (store) => planRow(store.savePlan(solved, name, options)));
}

export async function listPlans(file: string): Promise<ProjectPlanRow[]> {
  return withStore(file, false, (store) => store.listPlans().map(planRow));
}

/** A saved plan with its stops, ready for writePlanFiles. */
export async function loadPlan(file: string, name: string): Promise<LoadedPlan> {
  return withStore(file, false, (store) => loadFrom(store, name));
}

/** A saved plan with its manual edits applied in order: the plan as the window shows it, for export and rebalance. */
export async function loadEditedPlan(file: string, name: string): Promise<EditedPlan> {
  return withStore(file, false, (store) => {
    const loaded = loadFrom(store, name);
    return applyEdits(loaded, store.listEdits(loaded.info.name));
  });
}

export async function renamePlan(file: string, from: string, to: string): Promise<ProjectPlanRow> {
  return withStore(file, true, (store) => planRow(store.renamePlan(from, to)));
}

/** Records a manual edit (stop moved, locked, unlocked; a zone centre pinned or freed) against a saved plan. */
export async function appendEdit(file: string, plan: string, edit: PlanEditInput): Promise<PlanEditRow> {
  return withStore(file, true, (store) => editFrom(store, plan, edit));
}

export async function listEdits(file: string, plan: string): Promise<PlanEditRow[]> {
  return withStore(file, false, (store) => {
    const zoneIds = store.zoneIds(plan);
    return store.listEdits(plan).map((e) => editRow(e, zoneIds));
  });
}

/**
 * Checks, before a long solve, that a plan of this name could be saved: the project opens, the
 * name is free, the parent exists and no other window or process has the file open.
 */
export async function checkPlanCanBeSaved(file: string, name: string, parent?: string): Promise<void> {
  withStore(file, false, (store) => {
    store.checkNameFree(name);
    if (parent !== undefined) store.planInfo(parent);
  });
  const mine = open.get(keyOf(file));
  const holder = lockHolder(file);
  if (holder && !mine?.writable) throw lockedError(file, holder);
}

/**
 * planStopsFile (read, solve, write the plan files, report) that also saves the plan in a
 * project as version `project.name`. The name and the file are checked before solving.
 */
export async function planStopsFileToProject(
  input: string,
  read: StopFileOptions,
  settings: PlanSettingsInput,
  out: { geojson?: string; assignments?: string },
  project: { file: string; name: string; parent?: string },
  hooks: RunHooks = {},
  boundarySettings: BoundarySettings = {},
): Promise<{ report: PlanReport; saved: ProjectPlanRow }> {
  await checkPlanCanBeSaved(project.file, project.name, project.parent);
  const t0 = performance.now();
  hooks.onProgress?.({ phase: 'read', fraction: 0 });
  const stops = readStopsFile(input, read);
  const t1 = performance.now();
  const solved = await solveStops(stops, settings, hooks);
  const t2 = performance.now();
  hooks.onProgress?.({ phase: 'write', fraction: 1 });
  const notes = writePlanFiles(solved, out, boundarySettings);
  const saved = await savePlanToProject(project.file, solved, project.name, {
    request: settings,
    ...(project.parent !== undefined ? { parent: project.parent } : {}),
  });
  const t3 = performance.now();
  return { report: { ...planReport(solved, { readMs: t1 - t0, solveMs: t2 - t1, writeMs: t3 - t2 }, out), notes }, saved };
}

/** Writes a saved plan's GeoJSON and/or assignments CSV (all or nothing), with its manual edits applied. Returns notes on the boundaries. */
export async function exportPlanFromProject(
  file: string,
  name: string,
  out: { geojson?: string; assignments?: string },
  boundarySettings: BoundarySettings = {},
): Promise<{ plan: ProjectPlanRow; notes: string[] }> {
  const edited = await loadEditedPlan(file, name);
  const notes = writePlanFiles(edited, out, boundarySettings);
  return { plan: edited.loaded.info, notes };
}
