export { solveSteps, prepareStarts, finishSteps, runStartAlone, defaultSampleStops, type PreparedStarts, type StartOutcome, type StartResult, solveZones, solveZonesAsync, checkSolve, DEFAULT_RESTARTS, DEFAULT_MAX_ITERATIONS, type SolveHooks } from './kmeans.js';
export { countDistinctUpTo } from './distinct.js';
export * from './types.js';
export { planFromSolve, type Plan } from './plan.js';
