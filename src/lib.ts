/**
 * Zoneplan as a library for Node scripts (the bundle dist/node/lib.mjs): the API and the engine.
 */
export * from './api/index.js';
export { solveZones, solveZonesAsync, type SolveSettings, type SolveResult, SolveError } from './solve/index.js';
export { solveZonesParallel } from './run/parallel-solve.js';
export { readStopsFile, ImportError, type StopSet } from './io/index.js';
export { planFigures } from './zones/stats.js';
export { unitsFromLonLat, distanceKm, EARTH_RADIUS_KM } from './geo/index.js';
export { Random } from './util/random.js';
