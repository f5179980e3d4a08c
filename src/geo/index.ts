export { EARTH_RADIUS_KM, RAD_PER_DEG, DEG_PER_RAD } from './constants.js';
export { unitFromLonLat, unitsFromLonLat, lonLatFromVector, normaliseAt, type Unit3 } from './unit.js';
export { angleBetween, angleFromChord, chord2, unitDistanceKm, distanceKm } from './distance.js';
export { sphericalMean, karcherMean, karcherStep } from './mean.js';
export { LocalProjection } from './projection.js';
