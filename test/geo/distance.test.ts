import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { EARTH_RADIUS_KM } from '../../src/geo/constants.js';
import { angleBetween, angleFromChord, chord2, distanceKm, unitDistanceKm } from '../../src/geo/distance.js';
import { unitFromLonLat } from '../../src/geo/unit.js';

const RAD = Math.PI / 180;

/** Haversine central angle from degrees: an independent, small-angle-stable reference. */
function haversineAngle(lon1: number, lat1: number, lon2: number, lat2: number): number {
  const p1 = lat1 * RAD;
  const p2 = lat2 * RAD;
  const s = Math.sin((p2 - p1) / 2);
  const t = Math.sin(((lon2 - lon1) * RAD) / 2);
  const h = s * s + Math.cos(p1) * Math.cos(p2) * t * t;
  return 2 * Math.asin(Math.min(1, Math.sqrt(h)));
}

/** The formula the design rules out for short distances: acos of the dot product. */
function acosAngle(lon1: number, lat1: number, lon2: number, lat2: number): number {
  const a = unitFromLonLat(lon1, lat1);
  const b = unitFromLonLat(lon2, lat2);
  return Math.acos(Math.min(1, Math.max(-1, a[0] * b[0] + a[1] * b[1] + a[2] * b[2])));
}

describe('angleBetween', () => {
  it('is exact for a separation of 1e-9 rad, where acos of the dot product returns 0', () => {
    // a = (1, 0, 0), b = (cos t, sin t, 0): the central angle is t by construction.
    for (const t of [1e-9, 1e-12, 3e-15, 1e-7]) {
      const got = angleBetween(1, 0, 0, Math.cos(t), Math.sin(t), 0);
      expect(Math.abs(got - t) / t).toBeLessThan(1e-15);
    }
    // The failure the design warns about: cos(1e-9) rounds to exactly 1.
    expect(Math.acos(Math.cos(1e-9))).toBe(0);
  });

  it('matches the haversine formula for tiny separations anywhere (6 mm and up)', () => {
    fc.assert(
      fc.property(
        fc.double({ min: -180, max: 180, noNaN: true }),
        fc.double({ min: -89, max: 89, noNaN: true }),
        fc.double({ min: -9, max: -3, noNaN: true }), // log10 of the separation in degrees
        fc.double({ min: 0, max: 2 * Math.PI, noNaN: true }),
        (lon, lat, logSep, dir) => {
          const sep = 10 ** logSep;
          const lon2 = lon + (sep * Math.cos(dir)) / Math.cos(lat * RAD);
          const lat2 = lat + sep * Math.sin(dir);
          const ref = haversineAngle(lon, lat, lon2, lat2);
          const got = distanceKm(lon, lat, lon2, lat2) / EARTH_RADIUS_KM;
          // 1e-15 rad absolute is the rounding of the unit vectors themselves (6 nm on Earth).
          expect(Math.abs(got - ref)).toBeLessThan(1e-15 + 1e-12 * ref);
        },
      ),
      { numRuns: 300 },
    );
  });

  it('the tolerance above does catch acos of the dot product', () => {
    // 1e-7 degrees (about 1 cm) at a mid latitude: acos is off by far more than 1e-15 rad.
    const ref = haversineAngle(10, 45, 10, 45 + 1e-7);
    expect(Math.abs(acosAngle(10, 45, 10, 45 + 1e-7) - ref)).toBeGreaterThan(1e-12);
    expect(Math.abs(distanceKm(10, 45, 10, 45 + 1e-7) / EARTH_RADIUS_KM - ref)).toBeLessThan(1e-15);
  });

  it('is accurate near the antipode, where asin of the chord loses digits', () => {
    for (const t of [1e-9, 1e-6, 1e-3]) {
      // b is t away from the antipode of a = (1, 0, 0)
      const got = angleBetween(1, 0, 0, -Math.cos(t), Math.sin(t), 0);
      expect(Math.abs(got - (Math.PI - t))).toBeLessThan(1e-15);
    }
    expect(angleBetween(0, 0, 1, 0, 0, -1)).toBe(Math.PI);
  });

  it('is symmetric, zero on equal points, and pi R for antipodes in km', () => {
    expect(distanceKm(2.35, 48.85, 2.35, 48.85)).toBe(0);
    expect(distanceKm(10, 20, -30, -40)).toBe(distanceKm(-30, -40, 10, 20));
    expect(distanceKm(30, 10, -150, -10)).toBeCloseTo(Math.PI * EARTH_RADIUS_KM, 9);
    // A quarter meridian on this sphere: pi/2 * 6371.0088 km.
    expect(distanceKm(0, 0, 0, 90)).toBeCloseTo((Math.PI / 2) * 6371.0088, 9);
    // One degree of longitude on the equator.
    expect(distanceKm(0, 0, 1, 0)).toBeCloseTo(RAD * 6371.0088, 12);
  });

  it('unitDistanceKm is the angle times the mean Earth radius', () => {
    const a = unitFromLonLat(-0.1276, 51.5072);
    const b = unitFromLonLat(2.3522, 48.8566);
    expect(unitDistanceKm(...a, ...b)).toBe(angleBetween(...a, ...b) * EARTH_RADIUS_KM);
    // London to Paris is about 344 km on the sphere (common knowledge, loose check of units only).
    expect(unitDistanceKm(...a, ...b)).toBeGreaterThan(340);
    expect(unitDistanceKm(...a, ...b)).toBeLessThan(348);
  });
});

describe('angleFromChord and chord2', () => {
  it('angleFromChord equals 2 asin(chord / 2) on both sides of its series cut-off', () => {
    for (const chord of [0, 1e-12, 1e-6, 0.005, 0.0199999, 0.02, 0.0200001, 0.1, 1, 1.9, 1.999999, 2]) {
      const ref = 2 * Math.asin(chord / 2);
      const got = angleFromChord(chord);
      if (ref === 0) expect(got).toBe(0);
      else expect(Math.abs(got - ref) / ref).toBeLessThan(5e-14);
    }
  });

  it('angleFromChord agrees with angleBetween for random pairs', () => {
    fc.assert(
      fc.property(
        fc.double({ min: -180, max: 180, noNaN: true }),
        fc.double({ min: -90, max: 90, noNaN: true }),
        fc.double({ min: -180, max: 180, noNaN: true }),
        fc.double({ min: -90, max: 90, noNaN: true }),
        (lon1, lat1, lon2, lat2) => {
          const a = unitFromLonLat(lon1, lat1);
          const b = unitFromLonLat(lon2, lat2);
          const ref = angleBetween(...a, ...b);
          const got = angleFromChord(Math.sqrt(chord2(...a, ...b)));
          // Near the antipode the chord barely changes with the angle (d chord = cos(theta/2) d theta),
          // so a rounding of 1e-16 in the chord is worth 1e-16 / cos(theta/2) in the angle.
          expect(Math.abs(got - ref)).toBeLessThan(1e-14 + 4e-16 / Math.cos(ref / 2));
        },
      ),
      { numRuns: 300 },
    );
  });

  it('clamps chords over 2 (rounding) to pi', () => {
    expect(angleFromChord(2 + 1e-15)).toBe(Math.PI);
  });

  it('chord2 is the squared chord, 2 - 2 cos(angle) for unit vectors', () => {
    const a = unitFromLonLat(12, -34);
    const b = unitFromLonLat(-56, 7.8);
    const t = angleBetween(...a, ...b);
    expect(chord2(...a, ...b)).toBeCloseTo(2 - 2 * Math.cos(t), 14);
    expect(chord2(1, 2, 3, 1, 2, 3)).toBe(0);
  });
});
