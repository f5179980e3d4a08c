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
  readonly demand?: string;
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
  readonly zones: number;
  readonly seed?: number;
  readonly restarts?: number;
  readonly maxIterations?: number;
  readonly centre?: 'arc' | 'mean';
  readonly sampleStops?: number;
  /** Worker threads for the starts (default: up to 2, fewer on a one-core machine). Results do not depend on it. */
  readonly threads?: number;
}

/** One zone's figures, 1-based zone label. Distances are great-circle km, not drive times. */
export interface ZoneRow {
  readonly zone: number;
  readonly centre: [lon: number, lat: number];
  readonly stops: number;
  readonly demand: number;
  readonly meanKm: number;
  readonly maxKm: number;
  readonly objectiveKm2: number;
}

export interface PlanReport {
  readonly input: CheckReport;
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
  readonly distanceNote: string;
}

export interface PlanProgressEvent {
  readonly phase: 'read' | 'seed' | 'mean' | 'arc' | 'write' | 'done';
  readonly fraction: number;
  readonly restart?: number;
  readonly iteration?: number;
  readonly moved?: number;
}
