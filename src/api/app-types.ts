/**
 * The application API: what the map window (renderer) asks of the main side, the same over
 * Electron IPC (preload, contextBridge) and over loopback HTTP (browser mode). Types only, no
 * Node, Electron or DOM imports, so that the renderer can import this file.
 *
 * Big arrays travel as ArrayBuffers (binary), everything else as plain JSON-able data.
 */
import type { InputProblem, LimitsOutcome, PlanComparison, RebalanceReport, StopFileOptions, SweepRow, ZoneRow } from './types.js';

/** Settings of a plan run, as the plan panel sets them. */
export interface RunSettings {
  readonly zones: number | 'auto';
  readonly seed?: number;
  readonly restarts?: number;
  readonly capacity?: number;
  readonly balance?: number;
  readonly minStops?: number;
  readonly maxStops?: number;
  /** A depots file (path on the main side) or none. */
  readonly depotsFile?: string;
  /** Or a depots file's text, chosen in the window (name and text), e.g. in browser mode. */
  readonly depots?: { readonly name: string; readonly text: string };
  readonly centre?: 'arc' | 'mean';
}

/** A stop set in the project. */
export interface StopSetInfo {
  readonly id: number;
  readonly source: string;
  readonly importedAt: string;
  readonly stops: number;
  readonly totalDemand: number;
  readonly warnings: readonly InputProblem[];
  /** [west, south, east, north]. */
  readonly bbox: [number, number, number, number];
}

/** A plan version in the project. */
export interface PlanInfo {
  readonly name: string;
  readonly createdAt: string;
  readonly stopSetId: number;
  readonly zones: number;
  readonly stops: number;
  readonly objectiveKm2: number;
  readonly parent: string | null;
  /** Manual edits made to it since it was solved. */
  readonly edits: number;
  readonly feasible: boolean | null;
}

/** Everything the map and the zone table need about one plan (arrays in `PlanArrays`). */
export interface PlanView {
  readonly info: PlanInfo;
  readonly zones: readonly ZoneRow[];
  readonly limits: LimitsOutcome | null;
  /**
   * Zone polygons as a GeoJSON FeatureCollection (properties: zone, name, ...), or null. While
   * `boundariesPending`, those of an earlier state of the plan. The collection carries a
   * BoundariesStamp as its foreign member "zoneplan".
   */
  readonly boundaries: unknown | null;
  /** Which state of the plan this is: a number that grows with every change of it in this window (edit, undo, redo). */
  readonly version: number;
  /** Which state the polygons show: `version` when they are up to date, lower when older (0: the plan as solved). */
  readonly boundariesVersion: number;
  /** The polygons of this state are being drawn (a large plan after an edit): the plan asked for again has them when ready. */
  readonly boundariesPending: boolean;
  readonly objectiveKm2: number;
  readonly maxMinRatio: number | null;
  readonly demandCv: number;
  readonly notes: readonly string[];
  readonly distanceNote: string;
  /** Undo and redo are possible. */
  readonly canUndo: boolean;
  readonly canRedo: boolean;
}

/**
 * What the polygons of a PlanView show, carried by its FeatureCollection as the foreign member
 * "zoneplan" (RFC 7946 section 6.1), so that the map, given the polygons alone, can tell newer
 * ones from older and knows when newer ones are on the way.
 */
export interface BoundariesStamp {
  readonly plan: string;
  readonly version: number;
  readonly boundariesVersion: number;
  readonly pending: boolean;
}

/**
 * The stops of a plan for drawing: positions (Float32 lon, lat pairs), zone index (Int16: the
 * zone's position in PlanView.zones, 0-based; its label is PlanView.zones[index].zone) and
 * demand (Float32) per stop, and which are locked (Uint8), in one ArrayBuffer with offsets.
 */
export interface PlanArrays {
  readonly count: number;
  readonly buffer: ArrayBuffer;
  readonly lonLatOffset: number;
  readonly zoneOffset: number;
  readonly demandOffset: number;
  readonly lockedOffset: number;
}

/** One stop, for its details panel. */
export interface StopDetails {
  readonly index: number;
  readonly id: string;
  readonly lon: number;
  readonly lat: number;
  readonly demand: number;
  /** The zone's label, as ZoneRow.zone. */
  readonly zone: number;
  /** Great-circle km to its zone's centre. */
  readonly km: number;
  readonly locked: boolean;
}

/** A manual edit of a plan: stops by index (as in PlanArrays), zones by label (ZoneRow.zone). */
export type PlanEdit =
  | { readonly kind: 'move'; readonly stop: number; readonly zone: number }
  | { readonly kind: 'lock'; readonly stop: number }
  | { readonly kind: 'unlock'; readonly stop: number }
  /** Move a zone's centre and pin it there (a fixed depot). */
  | { readonly kind: 'pin-centre'; readonly zone: number; readonly lon: number; readonly lat: number }
  /** Free a pinned zone centre (no longer a fixed depot); with a position, the centre also goes back there. */
  | { readonly kind: 'unpin-centre'; readonly zone: number; readonly lon?: number; readonly lat?: number };

export type RunState = 'running' | 'done' | 'cancelled' | 'failed';

/** A plan run under way (solving happens in a worker thread). */
export interface RunStatus {
  readonly id: string;
  readonly state: RunState;
  readonly fraction: number;
  readonly phase: string;
  readonly message: string | null;
  /** The plan name it is saved under when done. */
  readonly planName: string;
}

/** The stops of a shown plan that changed zone between two plans (see Api.changedStopFlags). */
export interface ChangedStopFlags {
  readonly marked: number;
  /** One byte per stop of the shown plan, in the order of its arrays: 1 changed, 0 not; base64. */
  readonly flags: string;
}

/** The map's settings, shared by the desktop window and browser mode. */
export interface MapSettings {
  /** An online tile layer (an https URL with {z}, {x} and {y}) and its attribution; null: the offline outlines. */
  readonly tiles: { readonly url: string; readonly attribution: string } | null;
}

/** A rebalance under way: a plan rebalanced onto a new stop set in a worker thread, saved when done. */
export interface RebalanceStatus {
  readonly id: string;
  readonly state: RunState;
  readonly fraction: number;
  /** 'start', 'rebalance' (the assignments), 'boundaries' (drawing the zones), 'done'. */
  readonly phase: string;
  readonly message: string | null;
  /** The plan rebalanced, and the name the new plan is saved under when done. */
  readonly parent: string;
  readonly planName: string;
  /** What changed, once the new plan is saved. */
  readonly report: RebalanceReport | null;
}

/** A sweep under way: every number of zones in a range planned in a worker thread, one row each. */
export interface SweepStatus {
  readonly id: string;
  readonly state: RunState;
  /** How far the whole range is, 0..1. */
  readonly fraction: number;
  readonly from: number;
  readonly to: number;
  /** The rows done so far, in order of the number of zones, each one whole. */
  readonly rows: readonly SweepRow[];
  readonly message: string | null;
}

/**
 * Where imported stops come from: a file on the main side; a dropped or chosen file's bytes
 * (base64), read with the same encoding detection as files on disk; or its text, already decoded.
 */
export type ImportSource =
  | { readonly file: string }
  | { readonly name: string; readonly base64: string }
  | { readonly name: string; readonly text: string };

/** The result of an import: a stop set, or the problems that stopped it (nothing imported). */
export type ImportOutcome =
  | { readonly ok: true; readonly stopSet: StopSetInfo }
  | { readonly ok: false; readonly file: string; readonly problems: readonly InputProblem[]; readonly errorCount: number };

export interface ProjectInfo {
  readonly file: string;
  readonly stopSets: readonly StopSetInfo[];
  readonly plans: readonly PlanInfo[];
}

/** Export targets of a plan. */
export interface ExportRequest {
  readonly plan: string;
  /** 'plan': one GeoJSON with zones, centres and stops; the layers separately; the assignments CSV. */
  readonly kind: 'plan' | 'zones' | 'centres' | 'stops' | 'assignments';
  /** Destination path (desktop) or null (browser mode: the content is returned for download). */
  readonly file: string | null;
}

export interface ExportResult {
  readonly file: string | null;
  /** The file's text when `file` was null. */
  readonly content: string | null;
  readonly bytes: number;
}

/**
 * The API every front end of the map window calls. The Electron preload exposes exactly these
 * names on window.zoneplan; browser mode implements them over HTTP.
 */
export interface Api {
  /** Who answers: 'desktop' (Electron) or 'browser' (the local server). */
  mode(): Promise<'desktop' | 'browser'>;
  /** The open project (browser mode and the desktop app start on the bundled demo project). */
  project(): Promise<ProjectInfo>;
  newProject(file: string): Promise<ProjectInfo>;
  openProject(file: string): Promise<ProjectInfo>;
  /** Imports stops from a file on the main side, or from text (a dropped or chosen file) with its name. */
  importStops(source: ImportSource, options?: StopFileOptions): Promise<ImportOutcome>;
  startRun(stopSetId: number, settings: RunSettings, planName: string): Promise<RunStatus>;
  runStatus(id: string): Promise<RunStatus>;
  cancelRun(id: string): Promise<RunStatus>;
  plan(name: string): Promise<PlanView>;
  planArrays(name: string): Promise<PlanArrays>;
  /** Stop ids of a plan, in the order of its arrays. */
  stopIds(name: string): Promise<readonly string[]>;
  stop(plan: string, index: number): Promise<StopDetails>;
  edit(plan: string, edit: PlanEdit): Promise<PlanView>;
  undo(plan: string): Promise<PlanView>;
  redo(plan: string): Promise<PlanView>;
  renamePlan(from: string, to: string): Promise<ProjectInfo>;
  compare(a: string, b: string): Promise<PlanComparison>;
  /**
   * Which stops of plan `shown` changed zone between plans a and b (matched by id; a stop not in
   * both has not changed): one byte per stop of `shown` (1: changed), base64, and how many.
   */
  changedStopFlags(a: string, b: string, shown: string): Promise<ChangedStopFlags>;
  rebalance(plan: string, stopSetId: number, newName: string, budget: { readonly stops: number } | { readonly demandShare: number } | null): Promise<{ readonly view: PlanView; readonly report: RebalanceReport }>;
  /** Starts a rebalance in a worker thread (the plan as edited now, onto the stop set); saved as newName when done. */
  startRebalance(plan: string, stopSetId: number, newName: string, budget: { readonly stops: number } | { readonly demandShare: number } | null): Promise<RebalanceStatus>;
  rebalanceStatus(id: string): Promise<RebalanceStatus>;
  /** Stops a rebalance at once; nothing is saved, the plans are unchanged (one already finished stays 'done'). */
  cancelRebalance(id: string): Promise<RebalanceStatus>;
  sweep(stopSetId: number, from: number, to: number, settings: Omit<RunSettings, 'zones'>): Promise<readonly SweepRow[]>;
  /** Starts a sweep over [from, to] zones in a worker thread; its rows arrive in sweepStatus one by one. */
  startSweep(stopSetId: number, from: number, to: number, settings: Omit<RunSettings, 'zones'>): Promise<SweepStatus>;
  sweepStatus(id: string): Promise<SweepStatus>;
  /** Stops a sweep at once; the rows done before stay, nothing is saved. */
  cancelSweep(id: string): Promise<SweepStatus>;
  exportPlan(request: ExportRequest): Promise<ExportResult>;
  /** The map settings kept for this user (online tiles). */
  mapSettings(): Promise<MapSettings>;
  saveMapSettings(settings: MapSettings): Promise<MapSettings>;
}
