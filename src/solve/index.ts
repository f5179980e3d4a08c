export { solveSteps, prepareStarts, finishSteps, runStartAlone, defaultSampleStops, type PreparedStarts, type StartOutcome, type StartResult, solveZones, solveZonesAsync, checkSolve, DEFAULT_RESTARTS, DEFAULT_MAX_ITERATIONS, type SolveHooks } from './kmeans.js';
export { countDistinctUpTo } from './distinct.js';
export * from './types.js';
export { planFromSolve, type Plan } from './plan.js';
export { solveLimitedSteps, type LimitedSettings, type LimitedResult, type LimitsReport } from './limited.js';
export { hasLimits, zoneBounds, zonesForCapacity, type LimitSettings, type LimitNote } from './limits.js';
export { assignWithLimits, solveLimitLp, type ZoneBounds, type ZoneViolation, type LimitedAssignment } from './capacity.js';
export { drive, type DriveHooks } from './drive.js';
export { rebalance, type MoveBudget, type RebalanceInput, type RebalanceSettings, type RebalanceResult } from './rebalance.js';
