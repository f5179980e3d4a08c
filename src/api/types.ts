/**
 * The one typed API of Zoneplan: plain data in and out, the same for the command line, the
 * browser mode and the desktop window. Types only: no Node, Electron or DOM imports here, so the
 * renderer can import this file.
 */

/** A problem found in an input file (error: nothing imported; warning: imported anyway). */
export interface InputProblem {
  readonly severity: 'error' | 'warning';
  readonly code: string;
  readonly file: string;
  readonly row?: number;
  readonly feature?: number;
  readonly field?: string;
  readonly value?: string;
  readonly message: string;
  readonly count?: number;
}

/** Column (CSV) or property (GeoJSON) choices and format for reading stops. */
export interface StopFileOptions {
  readonly format?: 'csv' | 'geojson';
  readonly delimiter?: ',' | ';' | '\t';
  readonly id?: string;
  readonly lat?: string;
  readonly lon?: string;
  /** The demand column; null: none (every stop counts 1). */
  readonly demand?: string | null;
}

export interface CheckReport {
  readonly file: string;
  readonly format: 'csv' | 'geojson';
  readonly stops: number;
  readonly totalDemand: number;
  readonly fields: { readonly id: string | null; readonly lon: string; readonly lat: string; readonly demand: string | null };
  /** [west, south, east, north] in degrees (west > east when the stops straddle the antimeridian). */
  readonly bbox: [number, number, number, number];
  readonly warnings: readonly InputProblem[];
}

export interface PlanSettingsInput {
  /** Number of zones, or 'auto': the fewest zones whose capacity carries the total demand. */
  readonly zones: number | 'auto';
  readonly seed?: number;
  readonly restarts?: number;
  readonly maxIterations?: number;
  readonly centre?: 'arc' | 'mean';
  readonly sampleStops?: number;
  /** Worker threads for the starts (default: up to 2, fewer on a one-core machine). Results do not depend on it. */
  readonly threads?: number;
  /** No zone's demand above this. */
  readonly capacity?: number;
  /** CSV of zone (number or depot id) -> capacity; overrides `capacity` for the zones it names. */
  readonly capacityFile?: string;
  /** Every zone's demand within +-balance of the mean zone demand (0.05 = 5%). */
  readonly balance?: number;
  /** Stops per zone, at least / at most. */
  readonly minStops?: number;
  readonly maxStops?: number;
  /** CSV or GeoJSON of fixed depots (id, lat, lon, optional capacity): the first zones, centres fixed. */
  readonly depotsFile?: string;
  /** CSV of stop id -> zone (number or depot id): stops that must stay in that zone. */
  readonly locksFile?: string;
}

/** One zone's figures, 1-based zone label. Distances are great-circle km, not drive times. */
export interface ZoneRow {
  readonly zone: number;
  /** The depot id of a fixed depot's zone, else null. */
  readonly name: string | null;
  /** True when the centre is a fixed depot. */
  readonly fixed: boolean;
  /** The zone's demand bounds (null: none) and its demand as a share of the upper one. */
  readonly maxDemand: number | null;
  readonly minDemand: number | null;
  readonly utilisation: number | null;
  /** True when the zone breaks one of its bounds. */
  readonly breaksLimits: boolean;
  readonly centre: [lon: number, lat: number];
  readonly stops: number;
  readonly demand: number;
  readonly meanKm: number;
  readonly maxKm: number;
  readonly objectiveKm2: number;
}

/** A bound the final plan breaks, and by how much. */
export interface LimitBreach {
  readonly zone: number;
  readonly kind: 'over-demand' | 'under-demand' | 'over-stops' | 'under-stops';
  readonly load: number;
  readonly bound: number;
  readonly by: number;
}

/** How the workload limits came out. */
export interface LimitsOutcome {
  /**
   * The LP relaxation's lower bound on the objective at the final centres, and the plan's gap to
   * it; null when even the LP could not meet every bound (then no bound applies).
   */
  readonly lowerBoundKm2: number | null;
  readonly gap: number | null;
  readonly feasible: boolean;
  readonly breaches: readonly LimitBreach[];
  /** Stops the LP split between zones (each rounded to one), repair moves. */
  readonly split: number;
  readonly repaired: number;
  readonly notes: readonly string[];
}

export interface PlanReport {
  readonly input: CheckReport;
  /** Null when no workload limit was set. */
  readonly limits: LimitsOutcome | null;
  /** Zones with fixed centres (depots) and stops locked to a zone. */
  readonly fixedZones: number;
  readonly lockedStops: number;
  readonly zones: readonly ZoneRow[];
  readonly objectiveKm2: number;
  readonly iterations: number;
  readonly converged: boolean;
  readonly seed: number;
  readonly restarts: number;
  readonly bestRestart: number;
  readonly restartObjectivesKm2: readonly number[];
  readonly startStops: number;
  readonly reseeded: number;
  /** Share of stop-centre distances computed, against a full scan every iteration. */
  readonly distanceShare: number;
  readonly files: { readonly geojson?: string; readonly assignments?: string };
  readonly timings: { readonly readMs: number; readonly solveMs: number; readonly writeMs: number };
  /** Notes on the output (boundaries not drawn, stops outside their zone's territory, ...). */
  readonly notes: readonly string[];
  readonly distanceNote: string;
}

export interface PlanProgressEvent {
  readonly phase: 'read' | 'seed' | 'mean' | 'arc' | 'write' | 'done';
  readonly fraction: number;
  readonly restart?: number;
  readonly iteration?: number;
  readonly moved?: number;
}

/** One number of zones in a sweep: the data for a "how many zones" chart. */
export interface SweepRow {
  readonly zones: number;
  readonly objectiveKm2: number;
  /** Largest zone demand over the smallest (Infinity when a zone is empty). */
  readonly maxMinRatio: number;
  /** Coefficient of variation of zone demand (standard deviation / mean). */
  readonly demandCv: number;
  readonly meanKm: number;
  readonly maxKm: number;
  /** With limits: whether all bounds hold, and the gap to the LP bound. */
  readonly feasible: boolean | null;
  readonly gap: number | null;
  readonly ms: number;
  /** Why this zone count has no plan (settings it cannot meet), when it has none. */
  readonly note?: string;
}

export interface SweepReport {
  readonly input: CheckReport;
  readonly rows: readonly SweepRow[];
  readonly distanceNote: string;
}

/** A project file (.zoneplan): what it holds. */
export interface ProjectInfo {
  readonly file: string;
  /** The project format version (the file's schema version after any migration). */
  readonly formatVersion: number;
  readonly created: string | null;
  readonly createdBy: string | null;
  readonly stopSets: number;
  readonly plans: number;
  readonly edits: number;
  /** When this open migrated an older file: the format it had, and the copy kept of it. */
  readonly migratedFrom: number | null;
  readonly backup: string | null;
}

/** One import of stops into a project. */
export interface StopSetSummary {
  readonly id: number;
  readonly source: string;
  readonly format: 'csv' | 'geojson';
  /** ISO 8601 time of the import. */
  readonly imported: string;
  readonly stops: number;
  readonly fields: { readonly id: string | null; readonly lon: string; readonly lat: string; readonly demand: string | null };
  readonly warnings: readonly InputProblem[];
}

/** One saved plan (a version) as listed. */
export interface ProjectPlanRow {
  readonly name: string;
  /** ISO 8601 time it was saved. */
  readonly created: string;
  readonly stops: number;
  readonly zones: number;
  readonly objectiveKm2: number;
  readonly converged: boolean;
  readonly seed: number | null;
  /** The plan it was made from (a rebalance), or null. */
  readonly parent: string | null;
  /** The stops file and the project's stop set it used. */
  readonly source: string;
  readonly stopSet: number;
  /** The settings in one line, e.g. "12 zones, seed 3, 4 starts, capacity 900". */
  readonly settings: string;
  /** The settings as asked for, when they were saved with the plan. */
  readonly request: PlanSettingsInput | null;
  /** With workload limits: whether every bound holds; null without limits. */
  readonly feasible: boolean | null;
  readonly fixedZones: number;
  readonly hasBoundaries: boolean;
  /** Manual edits recorded against it. */
  readonly edits: number;
}

export type PlanEditKind = 'move' | 'lock' | 'unlock' | 'pin-centre' | 'unpin-centre';

/**
 * A manual edit to record. The stop by its id (as in the stops file) or its 0-based index;
 * zones by their label as shown (1..K). move: `zone` is where the stop goes; lock: the zone it
 * stays in (default its current zone); unlock: no zone; pin-centre: `zone` and the position;
 * unpin-centre: `zone` (a pinned one), and optionally the position its centre goes back to.
 */
export interface PlanEditInput {
  readonly kind: PlanEditKind;
  readonly stopId?: string;
  readonly stopIndex?: number;
  readonly zone?: number;
  readonly lon?: number;
  readonly lat?: number;
}

/** A recorded manual edit. Zones are labels (1..K); fromZone is the stop's zone before the edit. */
export interface PlanEditRow {
  readonly id: number;
  readonly plan: string;
  readonly kind: PlanEditKind;
  readonly stopIndex: number | null;
  readonly stopId: string | null;
  readonly fromZone: number | null;
  readonly toZone: number | null;
  readonly centre: [lon: number, lat: number] | null;
  /** ISO 8601 time of the edit. */
  readonly at: string;
}

/** Two plans side by side: stops that changed zone, workload per zone before and after. */
export interface PlanComparison {
  /** Stops present in both plans, and those of them in another zone (by zone label) in the second. */
  readonly commonStops: number;
  readonly changedStops: number;
  readonly changedDemand: number;
  /** The changed stops (the first 1000). */
  readonly changed: readonly { readonly id: string; readonly from: number; readonly to: number; readonly demand: number }[];
  readonly zones: readonly {
    readonly zone: number;
    readonly name: string | null;
    readonly demandBefore: number | null;
    readonly demandAfter: number | null;
    readonly stopsBefore: number | null;
    readonly stopsAfter: number | null;
  }[];
  readonly objectiveBeforeKm2: number;
  readonly objectiveAfterKm2: number;
}

/** What a rebalance changed. */
export interface RebalanceReport {
  /** Stops new in the stop set, gone from it, with changed demand, at a changed position. */
  readonly added: number;
  readonly removedStops: number;
  readonly demandChanged: number;
  readonly positionChanged: number;
  /** Stops whose zone was removed (moved of necessity), and stops that changed zone besides. */
  readonly forced: number;
  readonly moved: number;
  readonly movedDemand: number;
  readonly budget: { readonly stops: number } | { readonly demandShare: number } | null;
  readonly feasible: boolean;
  readonly comparison: PlanComparison;
  readonly notes: readonly string[];
}
