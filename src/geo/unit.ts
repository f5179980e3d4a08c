import { DEG_PER_RAD, RAD_PER_DEG } from './constants.js';

/** A point on the unit sphere as a 3-vector (x towards lon 0 / lat 0, z towards the north pole). */
export type Unit3 = [x: number, y: number, z: number];

/** Unit vector of a geographic position given in degrees. */
export function unitFromLonLat(lonDeg: number, latDeg: number): Unit3 {
  const lon = lonDeg * RAD_PER_DEG;
  const lat = latDeg * RAD_PER_DEG;
  const c = Math.cos(lat);
  return [c * Math.cos(lon), c * Math.sin(lon), Math.sin(lat)];
}

/**
 * Writes the unit vectors of many positions into one interleaved array (x0 y0 z0 x1 ...).
 * `lonLat` is interleaved as lon0 lat0 lon1 lat1 ... in degrees.
 */
export function unitsFromLonLat(lonLat: Float64Array, out = new Float64Array((lonLat.length / 2) * 3)): Float64Array {
  const n = lonLat.length / 2;
  for (let i = 0; i < n; i++) {
    const lon = lonLat[2 * i]! * RAD_PER_DEG;
    const lat = lonLat[2 * i + 1]! * RAD_PER_DEG;
    const c = Math.cos(lat);
    out[3 * i] = c * Math.cos(lon);
    out[3 * i + 1] = c * Math.sin(lon);
    out[3 * i + 2] = Math.sin(lat);
  }
  return out;
}

/**
 * Geographic position [lon, lat] in degrees of any non-zero 3-vector (it need not be normalised).
 * Longitude is in [-180, 180]; at the poles it is 0. The zero vector has no direction: NaN.
 */
export function lonLatFromVector(x: number, y: number, z: number): [lon: number, lat: number] {
  const h = Math.hypot(x, y);
  if (h === 0 && z === 0) return [Number.NaN, Number.NaN];
  const lat = Math.atan2(z, h) * DEG_PER_RAD;
  const lon = h === 0 ? 0 : Math.atan2(y, x) * DEG_PER_RAD;
  return [lon, lat];
}

/** Scales a 3-vector to unit length in place at `offset`; returns false (leaving it) when it is ~zero. */
export function normaliseAt(v: Float64Array, offset: number): boolean {
  const x = v[offset]!;
  const y = v[offset + 1]!;
  const z = v[offset + 2]!;
  const n = Math.hypot(x, y, z);
  if (!(n > 1e-300)) return false;
  v[offset] = x / n;
  v[offset + 1] = y / n;
  v[offset + 2] = z / n;
  return true;
}
