/**
 * Great-circle distances against outside references: WGS84 geodesics from the
 * geographiclib-geodesic package (C. F. F. Karney's GeographicLib, accurate to about 15 nm), and
 * published worked examples of spherical distances.
 */
import { describe, expect, it } from 'vitest';
import geodesic from 'geographiclib-geodesic';
import { EARTH_RADIUS_KM } from '../../src/geo/constants.js';
import { distanceKm } from '../../src/geo/distance.js';
import { Random } from '../../src/util/random.js';

const WGS84 = geodesic.Geodesic.WGS84;
const { a, f } = geodesic.Constants.WGS84;
const e2 = f * (2 - f);
/** Radii of curvature of WGS84, metres: meridional at the equator (the smallest) and at the poles (the largest of all). */
const M_EQUATOR = a * (1 - e2);
const N_POLE = a / Math.sqrt(1 - e2);
const R = EARTH_RADIUS_KM * 1000;

/**
 * Bounds of spherical / ellipsoidal distance for ANY pair of points, short or antipodal.
 * Mapping the ellipsoid to the sphere by geodetic latitude and longitude scales lengths by R / M
 * along meridians and R / N along parallels (M, N the radii of curvature), and by something in
 * between in other directions; so every curve's length changes by a factor within
 * [R / max(M, N), R / min(M, N)] = [R / N_pole, R / M_equator] = [0.99553, 1.00561]. Applied to
 * the ellipsoidal geodesic and to the great circle this bounds the ratio of the two shortest
 * distances. This is the "~0.5%" rule, made exact: short north-south lines at the equator reach
 * 0.56%. It holds for near-antipodal pairs too, although there the shortest ellipsoidal path may
 * run quite elsewhere (over a pole instead of along the equator): lengths, not routes, are compared.
 */
const RATIO_LOW = R / N_POLE;
const RATIO_HIGH = R / M_EQUATOR;

function ratio(lon1: number, lat1: number, lon2: number, lat2: number): number {
  const ellipsoidal = WGS84.Inverse(lat1, lon1, lat2, lon2).s12!;
  return (distanceKm(lon1, lat1, lon2, lat2) * 1000) / ellipsoidal;
}

describe('great-circle km against WGS84 geodesics (geographiclib-geodesic)', () => {
  it('the bounds are the expected ~0.5% (sanity of the constants above)', () => {
    expect(RATIO_LOW).toBeCloseTo(0.995533, 6);
    expect(RATIO_HIGH).toBeCloseTo(1.005614, 6);
  });

  it('chosen pairs from 100 m to antipodal stay within the bounds', () => {
    // [lon1, lat1, lon2, lat2, what]
    const pairs: [number, number, number, number, string][] = [
      [0, 0, 0, 0.000899, '100 m north-south at the equator (the 0.56% extreme)'],
      [13.4, 52.5, 13.40147, 52.5, '100 m east-west in Berlin'],
      [-122.42, 37.77, -122.41, 37.78, '1.4 km in San Francisco'],
      [151.2, -33.87, 151.3, -33.8, '12 km in Sydney'],
      [2.35, 48.86, -0.13, 51.51, 'Paris to London'],
      [-74.0, 40.7, -118.2, 34.1, 'New York to Los Angeles'],
      [0, 89.9, 180, 89.9, 'across the north pole, 22 km'],
      [139.7, 35.7, -58.4, -34.6, 'Tokyo to Buenos Aires (near-antipodal, 18 400 km)'],
      [0, 0, 179.5, 0.5, 'near-antipodal on the equator'],
      [0, 0, 179.9, 0, 'equator, 0.1 deg short of antipodal'],
      [10, 20, -170, -20, 'exactly antipodal'],
      [0, 0, 180, 0, 'antipodal on the equator: the geodesic runs over the poles'],
      [0, 90, 0, -90, 'pole to pole'],
    ];
    for (const [lon1, lat1, lon2, lat2, what] of pairs) {
      const q = ratio(lon1, lat1, lon2, lat2);
      expect(q, what).toBeGreaterThanOrEqual(RATIO_LOW - 1e-9);
      expect(q, what).toBeLessThanOrEqual(RATIO_HIGH + 1e-9);
      expect(Math.abs(q - 1), what).toBeLessThan(0.0057);
    }
  });

  it('2000 random pairs, lengths log-uniform from 100 m to 20 000 km, stay within the bounds', () => {
    const r = new Random(20_000);
    let sum = 0;
    let lowest = Infinity;
    let highest = 0;
    const outside: string[] = [];
    for (let i = 0; i < 2000; i++) {
      const lat1 = (Math.asin(2 * r.next() - 1) * 180) / Math.PI;
      const lon1 = 360 * r.next() - 180;
      const azimuth = 360 * r.next();
      const metres = 10 ** (2 + r.next() * (Math.log10(2e7) - 2));
      const end = WGS84.Direct(lat1, lon1, azimuth, metres);
      const q = ratio(lon1, lat1, end.lon2!, end.lat2!);
      if (!(q >= RATIO_LOW - 1e-9 && q <= RATIO_HIGH + 1e-9)) outside.push(`${lat1} ${lon1} az ${azimuth} ${metres} m: ${q}`);
      sum += q;
      lowest = Math.min(lowest, q);
      highest = Math.max(highest, q);
    }
    expect(outside).toEqual([]);
    // Over all directions and latitudes the mean radius is unbiased: the mean ratio is within
    // 0.1% of 1 (with the equatorial radius 6378.137 km it would be about 1.0011).
    expect(Math.abs(sum / 2000 - 1)).toBeLessThan(1e-3);
    // and the sample does reach near both ends of the range
    expect(lowest).toBeLessThan(0.997);
    expect(highest).toBeGreaterThan(1.004);
  });

  it('the bounds do catch a wrong radius: with the equatorial radius, equatorial north-south lines break them', () => {
    const q = ratio(0, 0, 0, 0.009) * (6378.137 / EARTH_RADIUS_KM);
    expect(q).toBeGreaterThan(RATIO_HIGH);
  });
});

describe('published worked examples of great-circle distance', () => {
  it('LAX to JFK, Ed Williams, "Aviation Formulary" (V1.4x), distance example', () => {
    // Values from memory of the Formulary's example: LAX (33deg57'N, 118deg24'W),
    // JFK (40deg38'N, 73deg47'W); d = 0.623585 rad, distance = d * 180 * 60 / pi = 2144 nm
    // (one nautical mile = one arc-minute of a great circle, so no Earth radius enters).
    const lax = [-(118 + 24 / 60), 33 + 57 / 60] as const;
    const jfk = [-(73 + 47 / 60), 40 + 38 / 60] as const;
    const d = distanceKm(lax[0], lax[1], jfk[0], jfk[1]) / EARTH_RADIUS_KM;
    expect(Math.abs(d - 0.623585)).toBeLessThan(5e-7); // the example prints 6 decimals
    expect(Math.round((d * 180 * 60) / Math.PI)).toBe(2144);
  });

  it('Nashville BNA to Los Angeles LAX, Rosetta Code task "Haversine formula"', () => {
    // From memory of the task page: BNA (N 36.12, W 86.67), LAX (N 33.94, W 118.40), with the
    // task's radius 6372.8 km: 2887.2599506071106 km (the page's reference output).
    const angle = distanceKm(-86.67, 36.12, -118.4, 33.94) / EARTH_RADIUS_KM;
    expect(Math.abs(angle * 6372.8 - 2887.2599506071106)).toBeLessThan(1e-6);
  });
});
