import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { lonLatFromVector, normaliseAt, unitFromLonLat, unitsFromLonLat } from '../../src/geo/unit.js';
import { angleBetween } from '../../src/geo/distance.js';

/** Longitude difference folded into (-180, 180]. */
function lonDiff(a: number, b: number): number {
  let d = (a - b) % 360;
  if (d > 180) d -= 360;
  if (d <= -180) d += 360;
  return d;
}

describe('unitFromLonLat', () => {
  it('puts the axes where the convention says (x to lon 0 lat 0, y to lon 90 E, z to the north pole)', () => {
    const close = (v: number[], w: number[]): void => v.forEach((c, i) => expect(c).toBeCloseTo(w[i]!, 15));
    close(unitFromLonLat(0, 0), [1, 0, 0]);
    close(unitFromLonLat(90, 0), [0, 1, 0]);
    close(unitFromLonLat(-90, 0), [0, -1, 0]);
    close(unitFromLonLat(180, 0), [-1, 0, 0]);
    close(unitFromLonLat(37, 90), [0, 0, 1]);
    close(unitFromLonLat(-120, -90), [0, 0, -1]);
    // 45 N on the prime meridian: (cos 45, 0, sin 45)
    close(unitFromLonLat(0, 45), [Math.SQRT1_2, 0, Math.SQRT1_2]);
  });

  it('gives unit vectors', () => {
    fc.assert(
      fc.property(fc.double({ min: -540, max: 540, noNaN: true }), fc.double({ min: -90, max: 90, noNaN: true }), (lon, lat) => {
        const [x, y, z] = unitFromLonLat(lon, lat);
        expect(Math.abs(Math.hypot(x, y, z) - 1)).toBeLessThan(4e-16);
      }),
    );
  });

  it('unitsFromLonLat fills the same vectors as unitFromLonLat, interleaved', () => {
    const lonLat = Float64Array.from([0, 0, 179.9, -33.5, -179.9, 89.99, 12.5, -90]);
    const out = unitsFromLonLat(lonLat);
    expect(out.length).toBe(12);
    for (let i = 0; i < 4; i++) {
      const v = unitFromLonLat(lonLat[2 * i]!, lonLat[2 * i + 1]!);
      expect([out[3 * i], out[3 * i + 1], out[3 * i + 2]]).toEqual(v);
    }
  });
});

describe('lonLatFromVector', () => {
  it('round-trips unitFromLonLat away from the poles, longitudes folded into [-180, 180]', () => {
    fc.assert(
      fc.property(fc.double({ min: -720, max: 720, noNaN: true }), fc.double({ min: -89.9999, max: 89.9999, noNaN: true }), (lon, lat) => {
        const [x, y, z] = unitFromLonLat(lon, lat);
        const [lon2, lat2] = lonLatFromVector(x, y, z);
        expect(lon2).toBeGreaterThanOrEqual(-180);
        expect(lon2).toBeLessThanOrEqual(180);
        expect(Math.abs(lat2 - lat)).toBeLessThan(1e-9);
        // 1e-9 degrees of longitude is at most 0.1 mm on the ground
        expect(Math.abs(lonDiff(lon2, lon))).toBeLessThan(1e-9);
      }),
    );
  });

  it('round-trips the vector (any position, poles included)', () => {
    fc.assert(
      fc.property(fc.double({ min: -180, max: 180, noNaN: true }), fc.double({ min: -90, max: 90, noNaN: true }), (lon, lat) => {
        const u = unitFromLonLat(lon, lat);
        const [lon2, lat2] = lonLatFromVector(...u);
        const v = unitFromLonLat(lon2, lat2);
        expect(angleBetween(...u, ...v)).toBeLessThan(1e-14);
      }),
    );
  });

  it('does not need a normalised vector', () => {
    const [x, y, z] = unitFromLonLat(-71.06, 42.36);
    const [lon, lat] = lonLatFromVector(7.5 * x, 7.5 * y, 7.5 * z);
    expect(lon).toBeCloseTo(-71.06, 12);
    expect(lat).toBeCloseTo(42.36, 12);
    const [lon3, lat3] = lonLatFromVector(1e-200 * x, 1e-200 * y, 1e-200 * z);
    expect(lon3).toBeCloseTo(-71.06, 12);
    expect(lat3).toBeCloseTo(42.36, 12);
  });

  it('gives longitude 0 at the poles and NaN for the zero vector', () => {
    expect(lonLatFromVector(0, 0, 1)).toEqual([0, 90]);
    expect(lonLatFromVector(0, 0, -3)).toEqual([0, -90]);
    const [lon, lat] = lonLatFromVector(0, 0, 0);
    expect(lon).toBeNaN();
    expect(lat).toBeNaN();
  });

  it('keeps the antimeridian: 180 and -180 sides are told apart by the sign of y', () => {
    expect(lonLatFromVector(-1, 1e-12, 0)[0]).toBeCloseTo(180, 9);
    expect(lonLatFromVector(-1, -1e-12, 0)[0]).toBeCloseTo(-180, 9);
  });
});

describe('normaliseAt', () => {
  it('scales a vector in place to unit length', () => {
    const v = Float64Array.from([9, 3, 4, 0, 0]);
    expect(normaliseAt(v, 1)).toBe(true);
    expect(v[0]).toBe(9);
    expect(v[1]).toBeCloseTo(0.6, 15);
    expect(v[2]).toBeCloseTo(0.8, 15);
    expect(v[3]).toBe(0);
  });

  it('leaves a (numerically) zero vector alone and says so', () => {
    const v = Float64Array.from([0, 0, 0]);
    expect(normaliseAt(v, 0)).toBe(false);
    expect([...v]).toEqual([0, 0, 0]);
    const w = Float64Array.from([1e-310, 0, 0]);
    expect(normaliseAt(w, 0)).toBe(false);
  });
});
