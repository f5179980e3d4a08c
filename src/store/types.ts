import type { StopSet } from '../io/stopset.js';
import type { Plan } from '../solve/plan.js';
import type { SolveResult, SolveSettings } from '../solve/types.js';
import type { PlanFigures } from '../zones/stats.js';
import type { RunSummary, ZoneStats } from './rows.js';

/** What the store takes and gives (zones as 0-based indices, stops by index). */

/** A stop set as listed (no arrays). */
export interface StoredStopSet {
  readonly id: number;
  readonly source: string;
  readonly format: StopSet['format'];
  readonly importedAt: string;
  readonly stops: number;
  readonly fields: StopSet['fields'];
  readonly warnings: StopSet['warnings'];
}

/** A plan as listed (no arrays). Zones are counted; edits are counted. */
export interface StoredPlanInfo {
  readonly id: number;
  readonly name: string;
  readonly createdAt: string;
  readonly stopSetId: number;
  readonly source: string;
  readonly stops: number;
  readonly zones: number;
  readonly objectiveKm2: number;
  readonly converged: boolean;
  readonly seed: number | null;
  readonly parent: string | null;
  readonly settings: SolveSettings;
  /** The settings as they were asked for (limits, depot and lock files), when the saver gave them. */
  readonly request: unknown;
  /** Null without workload limits; else whether the plan meets every bound. */
  readonly feasible: boolean | null;
  readonly fixedZones: number;
  readonly hasBoundaries: boolean;
  readonly edits: number;
}

/** A plan loaded whole: its stops, the plan, and what was saved with it. */
export interface StoredPlan {
  readonly info: StoredPlanInfo;
  readonly stops: StopSet;
  readonly plan: Plan;
  readonly zoneStats: ZoneStats | null;
  readonly run: RunSummary | null;
  /** GeoJSON as saved, or null. */
  readonly boundaries: unknown;
}

export interface PlanToSave {
  readonly stops: StopSet;
  readonly plan: Plan;
  readonly figures?: PlanFigures | null;
  readonly result?: SolveResult | null;
}

export interface SavePlanOptions {
  /** The plan this one was made from (a rebalance of it), by name. */
  readonly parent?: string | null;
  /** The settings as asked for (plain JSON data), kept for re-runs and listings. */
  readonly request?: unknown;
  /** Zone boundaries as a GeoJSON object. */
  readonly boundaries?: unknown;
}

export type EditKind = 'move' | 'lock' | 'unlock' | 'pin-centre' | 'unpin-centre';

/** A manual edit as given: zones are 0-based zone indices, the stop its index in the stop set. */
export interface EditToAdd {
  readonly kind: EditKind;
  readonly stopIndex?: number;
  /** move: the new zone; lock: the zone it stays in (default its current zone); pin-centre, unpin-centre: the zone. */
  readonly toZone?: number;
  /** pin-centre: where the zone's centre is pinned, degrees; unpin-centre: where it goes when freed (both or neither; neither: it stays). */
  readonly lon?: number;
  readonly lat?: number;
}

export interface StoredEdit {
  readonly id: number;
  readonly plan: string;
  readonly kind: EditKind;
  readonly stopIndex: number | null;
  readonly stopId: string | null;
  readonly fromZone: number | null;
  readonly toZone: number | null;
  readonly lon: number | null;
  readonly lat: number | null;
  readonly at: string;
}

export interface ProjectSummary {
  readonly file: string;
  readonly schemaVersion: number;
  readonly createdAt: string | null;
  readonly createdBy: string | null;
  readonly stopSets: number;
  readonly plans: number;
  readonly edits: number;
  /** Set when this open migrated the file: the version it had, and the copy made first. */
  readonly migratedFrom: number | null;
  readonly backup: string | null;
}
