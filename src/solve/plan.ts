import type { LimitsReport } from './limited.js';
import type { LimitSettings } from './limits.js';
import type { SolveResult, SolveSettings } from './types.js';

/** A plan: K zones with centres, and the zone of every stop. What is saved, shown and exported. */
export interface Plan {
  /** Zone labels shown to people and written to files, by zone index; default 1..K. */
  readonly zoneIds: readonly number[];
  /** Names of zones where one is known (the depot id of a fixed depot's zone), else null. */
  readonly zoneNames: readonly (string | null)[];
  /** Unit vectors of the centres, interleaved; length 3K. */
  readonly centres: Float64Array;
  /** Zone index (0-based, into zoneIds) of every stop. */
  readonly assignment: Int32Array;
  readonly objectiveKm2: number;
  readonly iterations: number;
  readonly converged: boolean;
  readonly settings: SolveSettings;
  /** Zones 0..fixedZones-1 have fixed centres (depots). */
  readonly fixedZones: number;
  /** Stops that must stay in their zone (zone index, or -1), when any were locked. */
  readonly locked: Int32Array | null;
  /** What the workload limits did, when there were any, and the limits as they were set. */
  readonly limits: LimitsReport | null;
  readonly limitSettings?: LimitSettings | null;
}

export function planFromSolve(
  result: SolveResult & { limits?: LimitsReport | null; fixedZones?: number },
  settings: SolveSettings,
  extra: { zoneNames?: readonly (string | null)[]; locked?: Int32Array | null; limitSettings?: LimitSettings | null } = {},
): Plan {
  const k = result.zones;
  return {
    zoneIds: Array.from({ length: k }, (_, j) => j + 1),
    zoneNames: extra.zoneNames ?? new Array<string | null>(k).fill(null),
    centres: result.centres,
    assignment: result.assignment,
    objectiveKm2: result.objectiveKm2,
    iterations: result.iterations,
    converged: result.converged,
    settings: { ...settings, seed: result.seed },
    fixedZones: result.fixedZones ?? 0,
    locked: extra.locked ?? null,
    limits: result.limits ?? null,
    limitSettings: extra.limitSettings ?? null,
  };
}
