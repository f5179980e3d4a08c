export * from './types.js';
export { checkStopsFile, planStopsFile, solveStops, writePlanFiles, zoneRows, type SolvedPlan, type RunHooks } from './plan-file.js';
export { checkReport, lonLatBox } from './report.js';
