import type { SolveResult, SolveSettings } from './types.js';

/** A plan: K zones with centres, and the zone of every stop. What is saved, shown and exported. */
export interface Plan {
  /** Zone labels shown to people and written to files, by zone index; default 1..K. */
  readonly zoneIds: readonly number[];
  /** Unit vectors of the centres, interleaved; length 3K. */
  readonly centres: Float64Array;
  /** Zone index (0-based, into zoneIds) of every stop. */
  readonly assignment: Int32Array;
  readonly objectiveKm2: number;
  readonly iterations: number;
  readonly converged: boolean;
  readonly settings: SolveSettings;
}

export function planFromSolve(result: SolveResult, settings: SolveSettings): Plan {
  return {
    zoneIds: Array.from({ length: result.zones }, (_, j) => j + 1),
    centres: result.centres,
    assignment: result.assignment,
    objectiveKm2: result.objectiveKm2,
    iterations: result.iterations,
    converged: result.converged,
    settings: { ...settings, seed: result.seed },
  };
}
