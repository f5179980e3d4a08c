import { EARTH_RADIUS_KM } from './constants.js';
import { unitFromLonLat } from './unit.js';

/**
 * Central angle in radians between two unit vectors, by atan2(|a x b|, a . b):
 * accurate for tiny separations and for near-antipodal ones alike (no acos of a dot product).
 */
export function angleBetween(ax: number, ay: number, az: number, bx: number, by: number, bz: number): number {
  const cx = ay * bz - az * by;
  const cy = az * bx - ax * bz;
  const cz = ax * by - ay * bx;
  return Math.atan2(Math.hypot(cx, cy, cz), ax * bx + ay * by + az * bz);
}

/**
 * Central angle in radians from the chord length between two points of the unit sphere.
 * For chords under 0.02 (about 127 km on Earth) a short series avoids the cost of Math.asin;
 * its truncation error is below 5e-14 relative.
 */
export function angleFromChord(chord: number): number {
  const h = chord * 0.5;
  if (h < 0.01) {
    const h2 = h * h;
    // asin(h) = h + h^3/6 + 3h^5/40 + 5h^7/112 + ...
    return 2 * h * (1 + h2 * (1 / 6 + h2 * (3 / 40 + h2 * (5 / 112))));
  }
  return 2 * Math.asin(h >= 1 ? 1 : h);
}

/** Squared chord length |a - b|^2 between two 3-vectors, by coordinate differences (stable when close). */
export function chord2(ax: number, ay: number, az: number, bx: number, by: number, bz: number): number {
  const dx = ax - bx;
  const dy = ay - by;
  const dz = az - bz;
  return dx * dx + dy * dy + dz * dz;
}

/** Great-circle distance in km between two unit vectors on a sphere of the mean Earth radius. */
export function unitDistanceKm(ax: number, ay: number, az: number, bx: number, by: number, bz: number): number {
  return angleBetween(ax, ay, az, bx, by, bz) * EARTH_RADIUS_KM;
}

/**
 * Great-circle distance in km between two positions in degrees (lon, lat), on a sphere of the
 * mean Earth radius. Straight-line over the globe: not a road distance and not a drive time.
 */
export function distanceKm(lon1: number, lat1: number, lon2: number, lat2: number): number {
  const [ax, ay, az] = unitFromLonLat(lon1, lat1);
  const [bx, by, bz] = unitFromLonLat(lon2, lat2);
  return angleBetween(ax, ay, az, bx, by, bz) * EARTH_RADIUS_KM;
}
