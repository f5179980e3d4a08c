import { randomUUID } from 'node:crypto';
import { statSync } from 'node:fs';
import path from 'node:path';
import { ImportError } from '../io/problems.js';
import { lonLatFromVector } from '../geo/unit.js';
import { startPlanRun, type PlanRunHandle, type WorkerFactory } from '../run/plan-run.js';
import type { BoundariesWorkerFactory } from '../run/boundaries-run.js';
import type { SweepWorkerFactory } from '../run/sweep-run.js';
import { startRebalanceRun, type RebalanceWorkerFactory } from '../run/rebalance-run.js';
import { startExportRun, type ExportWorkerFactory } from '../run/export-run.js';
import { startImportRead, type ImportWorkerFactory } from '../run/import-run.js';
import type { StopSet } from '../io/stopset.js';
import { exportSolvedPlan } from './plan-export.js';
import { MapSettingsStore } from './map-settings.js';
import type { RebalanceOutput } from '../run/rebalance-worker.js';
import type { WorkerRunHandle } from '../run/worker-run.js';
import type {
  Api,
  ChangedStopFlags,
  ExportRequest,
  ExportResult,
  ImportOutcome,
  ImportSource,
  PlanArrays,
  PlanEdit,
  PlanInfo,
  MapSettings,
  PlanView,
  ProjectInfo,
  RebalanceStatus,
  RunSettings,
  RunStatus,
  StopDetails,
  StopSetInfo,
  SweepStatus,
} from './app-types.js';
import { boundariesGeoJson } from './boundaries-json.js';
import { applyEdits, type EditedPlan } from './edited-plan.js';
import type { SolvedPlan } from './plan-file.js';
import { planArrays, planView, stopDetails } from './plan-view.js';
import { createProject, openProject, type LoadedPlan, type ProjectHandle } from './project.js';
import { changedFlags, comparePlans } from './rebalance.js';
import { checkReport } from './report.js';
import { SweepRuns } from './sweep-runs.js';
import { readStopsSource } from './text-import.js';
import { withDepotsText } from './depots-text.js';
import { readDepotsFile } from '../io/zone-files.js';
import { ZoneDrawings, type PlanState } from './zone-drawings.js';
import type { PlanComparison, PlanEditInput, PlanSettingsInput, ProjectPlanRow, RebalanceReport, StopFileOptions, SweepRow } from './types.js';
import { UndoStacks, type EditStep } from './undo-stack.js';
import { AppError, toWireError } from './wire-error.js';
import type { WireError } from './wire.js';

export interface SessionOptions {
  readonly mode: 'desktop' | 'browser';
  /** How plan runs get their worker thread (default: the plan worker beside the app). */
  readonly workerFactory?: WorkerFactory;
  /** Plans with more stops have their polygons redrawn after edits, and their exports made, in a worker thread (default 20,000). */
  readonly redrawBoundariesUpTo?: number;
  /** How sweeps and the redrawing of polygons get their worker threads (default: the workers beside the app). */
  readonly sweepWorkerFactory?: SweepWorkerFactory;
  readonly boundariesWorkerFactory?: BoundariesWorkerFactory;
  /** How rebalances get their worker thread (default: the rebalance worker beside the app). */
  readonly rebalanceWorkerFactory?: RebalanceWorkerFactory;
  /** How exports of large plans get their worker thread (default: the export worker beside the app). */
  readonly exportWorkerFactory?: ExportWorkerFactory;
  /** Stops files over this many bytes are read in a worker thread (default 4 MiB, about 100,000 stops). */
  readonly importInWorkerOver?: number;
  readonly importWorkerFactory?: ImportWorkerFactory;
  /** Where the map settings are kept (a JSON file in the user's data folder); none: for this session only. */
  readonly mapSettingsFile?: string;
}

interface RunRecord {
  status: { -readonly [K in keyof RunStatus]: RunStatus[K] };
  /** The run's thread while it runs; dropped when it has ended (its outcome holds the whole plan). */
  run: PlanRunHandle | null;
  /** Settles when the run has ended and its plan is saved (or not). */
  readonly ended: Promise<void>;
}

interface RebalanceRecord {
  status: { -readonly [K in keyof RebalanceStatus]: RebalanceStatus[K] };
  /** The rebalance's thread while it runs; dropped when it has ended (its outcome holds the whole plan). */
  run: WorkerRunHandle<RebalanceOutput> | null;
  /** Settles when the rebalance has ended and its plan is saved (or not), with its error when it failed. */
  readonly ended: Promise<WireError | null>;
}

type CachedPlan = PlanState;

/**
 * What one map window works with: one open project, its plan runs in worker threads, and the
 * undo history of its manual edits. Implements the Api the window calls, over IPC or HTTP.
 */
export class AppSession implements Api {
  private handle: ProjectHandle | null = null;
  private readonly runs = new Map<string, RunRecord>();
  private readonly rebalances = new Map<string, RebalanceRecord>();
  private readonly history = new UndoStacks();
  private readonly plans = new Map<string, CachedPlan>();
  /** Numbers the states of plans (every edit, undo and redo makes a new one), never reused in this window. */
  private version = 0;
  private readonly drawings: ZoneDrawings;
  private readonly sweeps: SweepRuns;
  private readonly loaded = new Map<string, LoadedPlan>();
  private readonly stopSetFacts = new Map<number, { totalDemand: number; bbox: [number, number, number, number] }>();
  private readonly mapSettingsStore: MapSettingsStore;
  /** The plan the window looked at last (the menu's Export uses it). */
  lastPlan: string | null = null;

  constructor(private readonly options: SessionOptions) {
    this.drawings = new ZoneDrawings(options.boundariesWorkerFactory, options.redrawBoundariesUpTo);
    this.sweeps = new SweepRuns(options.sweepWorkerFactory);
    this.mapSettingsStore = new MapSettingsStore(options.mapSettingsFile ?? null);
  }

  // ---- the project

  private need(): ProjectHandle {
    if (!this.handle) throw new AppError('project', 'no project is open: open or make one first');
    return this.handle;
  }

  get projectFile(): string | null {
    return this.handle?.file ?? null;
  }

  /** Opens a project as this window's (the one open before is closed once the new one opened). */
  async open(file: string): Promise<void> {
    // The same file again: closed first (its lock is this window's), then opened afresh.
    if (this.handle && path.resolve(this.handle.file) === path.resolve(file)) await this.close();
    const next = await openProject(file);
    await this.close();
    this.handle = next;
  }

  /** Cancels runs under way and closes the project. */
  async close(): Promise<void> {
    const runs = [...this.runs.values()].filter((r) => r.status.state === 'running');
    const rebalances = [...this.rebalances.values()].filter((r) => r.status.state === 'running');
    await Promise.all([...runs.map((r) => this.cancelRun(r.status.id)), ...rebalances.map((r) => this.cancelRebalance(r.status.id))]);
    // The window may still ask after them (another project was opened): they say why they stopped.
    const why = `because project ${this.handle ? path.basename(this.handle.file) : ''} was closed; nothing was saved`;
    for (const r of runs) if (r.status.state === 'cancelled') r.status.message = `the plan run was stopped ${why}`;
    for (const r of rebalances) if (r.status.state === 'cancelled') r.status.message = `the rebalance was stopped ${why}`;
    await Promise.all([this.sweeps.cancelAll(), this.drawings.clear()]);
    this.plans.clear();
    this.loaded.clear();
    this.history.clear();
    this.stopSetFacts.clear();
    this.lastPlan = null;
    const h = this.handle;
    this.handle = null;
    await h?.close();
  }

  async mode(): Promise<'desktop' | 'browser'> {
    return this.options.mode;
  }

  async project(): Promise<ProjectInfo> {
    const h = this.need();
    const stopSets = h.store.listStopSets().map((s): StopSetInfo => {
      let facts = this.stopSetFacts.get(s.id);
      if (!facts) {
        const r = checkReport(h.store.loadStopSet(s.id));
        facts = { totalDemand: r.totalDemand, bbox: r.bbox };
        this.stopSetFacts.set(s.id, facts);
      }
      return { id: s.id, source: s.source, importedAt: s.importedAt, stops: s.stops, totalDemand: facts.totalDemand, warnings: s.warnings.map((w) => ({ ...w })), bbox: facts.bbox };
    });
    const plans = (await h.listPlans()).map((p): PlanInfo => planInfoOf(p));
    return { file: h.file, stopSets, plans };
  }

  async newProject(file: string): Promise<ProjectInfo> {
    await createProject(file);
    await this.open(file);
    return this.project();
  }

  async openProject(file: string): Promise<ProjectInfo> {
    await this.open(file);
    return this.project();
  }

  /**
   * Imports stops as a new stop set, or lists the problems (nothing imported). Sources over
   * importInWorkerOver bytes are read and checked in a worker thread; the stop set is then added
   * to the project here.
   */
  async importStops(source: ImportSource, options: StopFileOptions = {}): Promise<ImportOutcome> {
    const h = this.need();
    let stops: StopSet;
    if (sourceBytes(source) > (this.options.importInWorkerOver ?? 4 * 2 ** 20)) {
      const o = await startImportRead({ source, options }, this.options.importWorkerFactory).outcome;
      if (o.state === 'failed') throw new AppError(o.error.kind, o.error.message);
      if (o.state === 'cancelled') throw new AppError('cancelled', 'the import was stopped; nothing was imported');
      if (!o.value.ok) return { ok: false, file: o.value.file, problems: o.value.problems, errorCount: o.value.errorCount };
      if (this.handle !== h) throw new AppError('project', 'the project was closed before the stops could be imported into it');
      stops = o.value.stops;
    } else {
      try {
        stops = readStopsSource(source, options);
      } catch (e) {
        if (!(e instanceof ImportError)) throw e;
        return { ok: false, file: e.file, problems: e.problems.map((p) => ({ ...p })), errorCount: e.errorCount };
      }
    }
    const id = h.store.addStopSet(stops).id;
    const info = (await this.project()).stopSets.find((s) => s.id === id)!;
    return { ok: true, stopSet: info };
  }

  // ---- plan runs

  async startRun(stopSetId: number, settings: RunSettings, planName: string): Promise<RunStatus> {
    const h = this.need();
    const name = h.store.checkNameFree(planName);
    this.nameNotTaken(name);
    const stops = h.store.loadStopSet(stopSetId);
    if (settings.depotsFile !== undefined && settings.depots !== undefined) throw new AppError('usage', 'give the fixed depots as a file or as its text, not both');
    // A bad depots file stops here, with its problems by row and field.
    const { request, cleanup } = withDepotsText(planSettings(settings), settings.depots);
    const id = randomUUID();
    const status: RunRecord['status'] = { id, state: 'running', fraction: 0, phase: 'start', message: null, planName: name };
    const run = startPlanRun(
      { stops, settings: { ...request, threads: 1 } },
      (fraction, phase) => {
        if (status.state !== 'running') return;
        status.fraction = fraction;
        status.phase = phase;
      },
      this.options.workerFactory,
    );
    const ended = run.outcome.finally(cleanup).then(async (o) => {
      if (status.state !== 'running') return;
      if (o.state === 'cancelled') {
        Object.assign(status, { state: 'cancelled', message: 'the plan run was cancelled; the saved plans are unchanged' });
        return;
      }
      if (o.state === 'failed') {
        Object.assign(status, { state: 'failed', message: o.error.message });
        return;
      }
      try {
        if (this.handle !== h) throw new AppError('project', `the project was closed before plan "${name}" could be saved in it`);
        await h.savePlan(o.solved, name, { request, boundaries: o.boundaries });
        Object.assign(status, { state: 'done', fraction: 1, phase: 'done', message: o.notes.length > 0 ? o.notes.join('; ') : null });
      } catch (e) {
        Object.assign(status, { state: 'failed', message: e instanceof Error ? e.message : String(e) });
      }
    });
    const record: RunRecord = { status, run, ended };
    void ended.finally(() => (record.run = null));
    this.runs.set(id, record);
    return { ...status };
  }

  private runOf(id: string): RunRecord {
    const r = this.runs.get(id);
    if (!r) throw new AppError('usage', `no plan run ${id} in this window`);
    return r;
  }

  async runStatus(id: string): Promise<RunStatus> {
    return { ...this.runOf(id).status };
  }

  async cancelRun(id: string): Promise<RunStatus> {
    const r = this.runOf(id);
    if (r.status.state === 'running') {
      await r.run?.cancel();
      await r.ended;
    }
    return { ...r.status };
  }

  /** Waits until a run has ended (and its plan is saved when it succeeded). */
  async waitForRun(id: string): Promise<RunStatus> {
    const r = this.runOf(id);
    await r.ended;
    return { ...r.status };
  }

  // ---- plans as they are now

  private async edited(name: string): Promise<CachedPlan> {
    const h = this.need();
    const key = h.store.planInfo(name).name;
    let c = this.plans.get(key);
    if (!c) {
      // The plan as solved is read once; its edits are applied afresh after each change.
      let loaded = this.loaded.get(key);
      if (!loaded) {
        loaded = await h.loadPlan(key);
        this.loaded.set(key, loaded);
      }
      c = { plan: applyEdits(loaded, h.store.listEdits(key)), version: ++this.version };
      this.plans.set(key, c);
    }
    this.lastPlan = key;
    return c;
  }

  private view(c: CachedPlan): PlanView {
    const name = c.plan.loaded.info.name;
    const { drawn, pending } = this.drawings.of(name, c);
    return planView(c.plan, drawn.geojson, drawn.notes, this.history.canUndo(name), this.history.canRedo(name), { version: c.version, boundariesVersion: drawn.version, pending });
  }

  async plan(name: string): Promise<PlanView> {
    return this.view(await this.edited(name));
  }

  async planArrays(name: string): Promise<PlanArrays> {
    return planArrays((await this.edited(name)).plan);
  }

  async stopIds(name: string): Promise<readonly string[]> {
    return (await this.edited(name)).plan.stops.ids;
  }

  async stop(plan: string, index: number): Promise<StopDetails> {
    const p = (await this.edited(plan)).plan;
    if (!(index >= 0 && index < p.stops.ids.length)) throw new AppError('usage', `plan "${p.loaded.info.name}" has stops 0..${p.stops.ids.length - 1}, not ${index}`);
    return stopDetails(p, index);
  }

  // ---- manual edits

  /**
   * The edit that takes `edit` back, from the plan as it is before it. A centre edit is undone by
   * the centre's position and state before it: pinned there again, or freed there (the position
   * goes with the unpin, so the centre comes back to where it was, not where it was pinned).
   */
  private inverseOf(p: EditedPlan, edit: PlanEdit): PlanEdit {
    const label = (j: number): number => p.plan.zoneIds[j]!;
    if (edit.kind === 'pin-centre' || edit.kind === 'unpin-centre') {
      const j = p.plan.zoneIds.indexOf(edit.zone);
      if (j < 0) return edit; // refused when recorded
      const c = p.plan.centres;
      const [lon, lat] = lonLatFromVector(c[3 * j]!, c[3 * j + 1]!, c[3 * j + 2]!);
      if (p.pinned[j] === 1) return { kind: 'pin-centre', zone: edit.zone, lon, lat };
      return edit.kind === 'pin-centre' ? { kind: 'unpin-centre', zone: edit.zone, lon, lat } : edit; // unpinning a free centre is refused when recorded
    }
    const i = edit.stop;
    if (!(i >= 0 && i < p.stops.ids.length)) return edit; // refused when recorded
    if (edit.kind === 'move') return { kind: 'move', stop: i, zone: label(p.plan.assignment[i]!) };
    return p.locked[i]! >= 0 ? { kind: 'lock', stop: i } : { kind: 'unlock', stop: i };
  }

  /** Records an edit in the project and returns the plan as it is after it. */
  private async record(plan: string, edit: PlanEdit): Promise<{ key: string; inverse: PlanEdit }> {
    const h = this.need();
    const c = await this.edited(plan);
    const key = c.plan.loaded.info.name;
    const inverse = this.inverseOf(c.plan, edit);
    let input: PlanEditInput;
    if (edit.kind === 'pin-centre') input = { kind: 'pin-centre', zone: edit.zone, lon: edit.lon, lat: edit.lat };
    else if (edit.kind === 'unpin-centre') input = { kind: 'unpin-centre', zone: edit.zone, ...(edit.lon !== undefined && edit.lat !== undefined ? { lon: edit.lon, lat: edit.lat } : {}) };
    else if (edit.kind === 'move') input = { kind: 'move', stopIndex: edit.stop, zone: edit.zone };
    else input = { kind: edit.kind, stopIndex: edit.stop };
    await h.appendEdit(key, input);
    this.plans.delete(key);
    return { key, inverse };
  }

  async edit(plan: string, edit: PlanEdit): Promise<PlanView> {
    const { key, inverse } = await this.record(plan, edit);
    this.history.did(key, { edit, inverse });
    return this.plan(key);
  }

  async undo(plan: string): Promise<PlanView> {
    const key = (await this.edited(plan)).plan.loaded.info.name;
    const step = this.history.popUndo(key);
    if (!step) throw new AppError('usage', `nothing to undo in plan "${key}"`);
    try {
      await this.record(key, step.inverse);
    } catch (e) {
      this.history.redone(key, step);
      throw e;
    }
    this.history.undone(key, step);
    return this.plan(key);
  }

  async redo(plan: string): Promise<PlanView> {
    const key = (await this.edited(plan)).plan.loaded.info.name;
    const step: EditStep | undefined = this.history.popRedo(key);
    if (!step) throw new AppError('usage', `nothing to redo in plan "${key}"`);
    let inverse: PlanEdit;
    try {
      inverse = (await this.record(key, step.edit)).inverse;
    } catch (e) {
      this.history.undone(key, step);
      throw e;
    }
    this.history.redone(key, { edit: step.edit, inverse });
    return this.plan(key);
  }

  async renamePlan(from: string, to: string): Promise<ProjectInfo> {
    const h = this.need();
    const old = h.store.planInfo(from).name;
    this.nameNotTaken(to.trim());
    const row = await h.renamePlan(old, to);
    this.plans.delete(old);
    this.loaded.delete(old);
    this.drawings.rename(old, row.name);
    this.history.rename(old, row.name);
    if (this.lastPlan === old) this.lastPlan = row.name;
    return this.project();
  }

  // ---- comparing, rebalancing, sweeping, exporting

  async compare(a: string, b: string): Promise<PlanComparison> {
    const pa = (await this.edited(a)).plan;
    const pb = (await this.edited(b)).plan;
    return comparePlans(pa, pb);
  }

  async changedStopFlags(a: string, b: string, shown: string): Promise<ChangedStopFlags> {
    const pa = (await this.edited(a)).plan;
    const pb = (await this.edited(b)).plan;
    const ps = (await this.edited(shown)).plan;
    const flags = changedFlags(pa, pb, ps);
    let marked = 0;
    for (let i = 0; i < flags.length; i++) marked += flags[i]!;
    return { marked, flags: Buffer.from(flags.buffer, flags.byteOffset, flags.byteLength).toString('base64') };
  }

  /**
   * Starts rebalancing a plan (as edited now) onto a stop set in a worker thread; the new plan is
   * saved as `newName`, with the plan as its parent, when the rebalance is done. The name is
   * checked here (free, and not that of another run under way).
   */
  async startRebalance(plan: string, stopSetId: number, newName: string, budget: { readonly stops: number } | { readonly demandShare: number } | null): Promise<RebalanceStatus> {
    const h = this.need();
    const old = (await this.edited(plan)).plan;
    const parent = old.loaded.info.name;
    const name = h.store.checkNameFree(newName);
    this.nameNotTaken(name);
    const stops = h.store.loadStopSet(stopSetId);
    const id = randomUUID();
    const status: RebalanceRecord['status'] = { id, state: 'running', fraction: 0, phase: 'start', message: null, parent, planName: name, report: null };
    const run = startRebalanceRun(
      { old: { stops: old.stops, plan: old.plan, pinned: old.pinned }, stops, budget },
      (p) => {
        if (status.state !== 'running' || p.fraction < status.fraction) return;
        status.fraction = p.fraction;
        status.phase = p.phase;
      },
      this.options.rebalanceWorkerFactory,
    );
    const ended = run.outcome.then(async (o): Promise<WireError | null> => {
      if (status.state !== 'running') return null;
      if (o.state === 'cancelled') {
        Object.assign(status, { state: 'cancelled', message: 'the rebalance was cancelled; the saved plans are unchanged' });
        return null;
      }
      if (o.state === 'failed') {
        Object.assign(status, { state: 'failed', message: o.error.message });
        return o.error;
      }
      try {
        if (this.handle !== h) throw new AppError('project', `the project was closed before plan "${name}" could be saved in it`);
        await h.savePlan(o.value.solved, name, { parent, boundaries: o.value.boundaries });
        Object.assign(status, { state: 'done', fraction: 1, phase: 'done', report: o.value.report });
        return null;
      } catch (e) {
        const error = toWireError(e);
        Object.assign(status, { state: 'failed', message: error.message });
        return error;
      }
    });
    const record: RebalanceRecord = { status, run, ended };
    void ended.finally(() => (record.run = null));
    this.rebalances.set(id, record);
    return { ...status };
  }

  /** A plan name that a plan run or a rebalance under way will save under is not free either. */
  private nameNotTaken(name: string): void {
    for (const r of [...this.runs.values(), ...this.rebalances.values()]) {
      if (r.status.state === 'running' && r.status.planName === name) throw new AppError('usage', `a run that saves plan "${name}" is already under way`);
    }
  }

  private rebalanceOf(id: string): RebalanceRecord {
    const r = this.rebalances.get(id);
    if (!r) throw new AppError('usage', `no rebalance ${id} in this window`);
    return r;
  }

  async rebalanceStatus(id: string): Promise<RebalanceStatus> {
    return { ...this.rebalanceOf(id).status };
  }

  /** Stops a rebalance at once (its thread is ended); nothing is saved. One that had already finished stays 'done', its plan saved. */
  async cancelRebalance(id: string): Promise<RebalanceStatus> {
    const r = this.rebalanceOf(id);
    if (r.status.state === 'running') {
      await r.run?.cancel();
      await r.ended;
    }
    return { ...r.status };
  }

  /** Waits until a rebalance has ended (and its plan is saved when it succeeded). */
  async waitForRebalance(id: string): Promise<RebalanceStatus> {
    const r = this.rebalanceOf(id);
    await r.ended;
    return { ...r.status };
  }

  /** Rebalances a plan and waits for the new plan (the window's way is startRebalance, with progress). */
  async rebalance(
    plan: string,
    stopSetId: number,
    newName: string,
    budget: { readonly stops: number } | { readonly demandShare: number } | null,
  ): Promise<{ readonly view: PlanView; readonly report: RebalanceReport }> {
    const r = this.rebalanceOf((await this.startRebalance(plan, stopSetId, newName, budget)).id);
    const error = await r.ended;
    const s = r.status;
    if (s.state === 'done' && s.report) return { view: await this.plan(s.planName), report: s.report };
    throw new AppError(error?.kind ?? 'cancelled', s.message ?? `the rebalance ended ${s.state}`);
  }

  /**
   * Starts a sweep over [from, to] zones in a worker thread; `onChange` hears each row as its
   * number of zones is done (and every whole per cent). A bad depots file stops it here.
   */
  async startSweep(stopSetId: number, from: number, to: number, settings: Omit<RunSettings, 'zones'>, onChange?: (s: SweepStatus) => void): Promise<SweepStatus> {
    const stops = this.need().store.loadStopSet(stopSetId);
    if (settings.depotsFile !== undefined && settings.depots !== undefined) throw new AppError('usage', 'give the fixed depots as a file or as its text, not both');
    if (settings.depotsFile !== undefined) readDepotsFile(settings.depotsFile);
    const { request, cleanup } = withDepotsText(planSettings({ ...settings, zones: from }), settings.depots);
    const { zones: _zones, ...rest } = request;
    return this.sweeps.start(stops, { ...rest, threads: 1 }, from, to, cleanup, onChange);
  }

  async sweepStatus(id: string): Promise<SweepStatus> {
    return this.sweeps.status(id);
  }

  /** Stops a sweep at once; the rows done before stay, nothing is saved. */
  async cancelSweep(id: string): Promise<SweepStatus> {
    return this.sweeps.cancel(id);
  }

  async waitForSweep(id: string): Promise<SweepStatus> {
    return this.sweeps.wait(id);
  }

  async sweep(stopSetId: number, from: number, to: number, settings: Omit<RunSettings, 'zones'>): Promise<readonly SweepRow[]> {
    return this.sweeps.rows((await this.startSweep(stopSetId, from, to, settings)).id);
  }

  async mapSettings(): Promise<MapSettings> {
    return this.mapSettingsStore.get();
  }

  async saveMapSettings(settings: MapSettings): Promise<MapSettings> {
    return this.mapSettingsStore.set(settings);
  }

  /**
   * Exports a plan as edited now. Plans over the size drawn at once (redrawBoundariesUpTo) are
   * exported in a worker thread: drawing the layers of a million stops takes seconds.
   */
  async exportPlan(request: ExportRequest): Promise<ExportResult> {
    const p = (await this.edited(request.plan)).plan;
    const name = p.loaded.info.name;
    if (p.stops.ids.length <= (this.options.redrawBoundariesUpTo ?? 20_000)) return exportSolvedPlan(p, name, request.kind, request.file);
    const solved: SolvedPlan = { stops: p.stops, plan: p.plan, result: p.result, figures: p.figures, pinned: p.pinned };
    const o = await startExportRun({ plan: solved, name, kind: request.kind, file: request.file }, this.options.exportWorkerFactory).outcome;
    if (o.state === 'done') return o.value;
    if (o.state === 'failed') throw new AppError(o.error.kind, o.error.message);
    throw new AppError('cancelled', 'the export was stopped; nothing was written');
  }
}

/** About how many bytes a source holds (a file's size; 0 for a file that cannot be seen: reading it reports the problem at once). */
function sourceBytes(source: ImportSource): number {
  if ('file' in source) {
    try {
      return statSync(source.file).size;
    } catch {
      return 0;
    }
  }
  return 'base64' in source ? (source.base64.length * 3) / 4 : source.text.length;
}

function planInfoOf(p: ProjectPlanRow): PlanInfo {
  return { name: p.name, createdAt: p.created, stopSetId: p.stopSet, zones: p.zones, stops: p.stops, objectiveKm2: p.objectiveKm2, parent: p.parent, edits: p.edits, feasible: p.feasible };
}

/** The plan panel's settings as the engine's (only those given). */
function planSettings(s: RunSettings): PlanSettingsInput {
  return {
    zones: s.zones,
    ...(s.seed !== undefined ? { seed: s.seed } : {}),
    ...(s.restarts !== undefined ? { restarts: s.restarts } : {}),
    ...(s.capacity !== undefined ? { capacity: s.capacity } : {}),
    ...(s.balance !== undefined ? { balance: s.balance } : {}),
    ...(s.minStops !== undefined ? { minStops: s.minStops } : {}),
    ...(s.maxStops !== undefined ? { maxStops: s.maxStops } : {}),
    ...(s.depotsFile !== undefined ? { depotsFile: s.depotsFile } : {}),
    ...(s.centre !== undefined ? { centre: s.centre } : {}),
  };
}
