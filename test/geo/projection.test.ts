import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { area as turfArea, polygon as turfPolygon } from '@turf/turf';
import { LocalProjection } from '../../src/geo/projection.js';
import { angleBetween, distanceKm } from '../../src/geo/distance.js';
import { EARTH_RADIUS_KM } from '../../src/geo/constants.js';
import { unitFromLonLat } from '../../src/geo/unit.js';

/** Ring (closed, lon/lat degrees) with every edge cut into `parts` pieces, linearly in lon/lat. */
function densify(ring: readonly [number, number][], parts: number): [number, number][] {
  const out: [number, number][] = [];
  for (let i = 0; i + 1 < ring.length; i++) {
    const [x0, y0] = ring[i]!;
    const [x1, y1] = ring[i + 1]!;
    for (let s = 0; s < parts; s++) out.push([x0 + ((x1 - x0) * s) / parts, y0 + ((y1 - y0) * s) / parts]);
  }
  out.push(out[0]!);
  return out;
}

/** Shoelace area of a closed ring of planar points, km^2. */
function shoelace(points: readonly [number, number][]): number {
  let s = 0;
  for (let i = 0; i + 1 < points.length; i++) s += points[i]![0] * points[i + 1]![1] - points[i + 1]![0] * points[i]![1];
  return Math.abs(s) / 2;
}

describe('LocalProjection: worked example of Snyder (1987)', () => {
  // J. P. Snyder, "Map Projections: A Working Manual", USGS Professional Paper 1395 (1987),
  // Appendix A, numerical example for the Lambert azimuthal equal-area projection, sphere:
  // R = 3.0 units, centre phi1 = 40 N, lambda0 = 100 W; point phi = 20 S, lambda = 100 E gives
  // x = -4.2339303, y = 4.0257775 units; the inverse of those rounded x, y gives
  // phi = -19.9999993 deg, lambda = 100.0000004 deg. Numbers as transcribed at
  // https://neacsu.net/docs/geodesy/snyder/numerics/laea (not checked against the printed book).
  const p = new LocalProjection(-100, 40, 3.0);

  it('forward', () => {
    const [x, y] = p.forward(100, -20);
    expect(Math.abs(x - -4.2339303)).toBeLessThan(5e-8);
    expect(Math.abs(y - 4.0257775)).toBeLessThan(5e-8);
  });

  it('inverse', () => {
    const [lon, lat] = p.inverse(-4.2339303, 4.0257775);
    expect(Math.abs(lat - -19.9999993)).toBeLessThan(5e-8);
    expect(Math.abs(lon - 100.0000004)).toBeLessThan(5e-8);
  });
});

describe('LocalProjection', () => {
  it('maps the centre to the origin, with x east and y north', () => {
    const p = new LocalProjection(4.9, 52.37);
    const [x0, y0] = p.forward(4.9, 52.37);
    expect(Math.abs(x0)).toBeLessThan(1e-12);
    expect(Math.abs(y0)).toBeLessThan(1e-12);
    const [xe, ye] = p.forward(4.95, 52.37);
    expect(xe).toBeGreaterThan(0);
    expect(Math.abs(ye)).toBeLessThan(0.01); // a parallel curves slightly away from the x axis
    const [xn, yn] = p.forward(4.9, 52.42);
    expect(Math.abs(xn)).toBeLessThan(1e-9);
    expect(yn).toBeGreaterThan(0);
    expect(p.inverseUnit(0, 0)).toEqual(unitFromLonLat(4.9, 52.37));
  });

  it('keeps distances from the centre nearly true (rho = 2 R sin(c / 2))', () => {
    const p = new LocalProjection(-58.38, -34.6);
    const [x, y] = p.forward(-57.0, -35.2);
    const c = distanceKm(-58.38, -34.6, -57.0, -35.2) / EARTH_RADIUS_KM;
    expect(Math.hypot(x, y)).toBeCloseTo(2 * EARTH_RADIUS_KM * Math.sin(c / 2), 9);
  });

  it('inverse(forward(p)) = p within 5000 km of the centre, any centre', () => {
    fc.assert(
      fc.property(
        fc.double({ min: -180, max: 180, noNaN: true }),
        fc.double({ min: -90, max: 90, noNaN: true }),
        fc.double({ min: -180, max: 180, noNaN: true }),
        fc.double({ min: -90, max: 90, noNaN: true }),
        (clon, clat, lon, lat) => {
          fc.pre(distanceKm(clon, clat, lon, lat) < 5000);
          const proj = new LocalProjection(clon, clat);
          const [x, y] = proj.forward(lon, lat);
          const back = proj.inverseUnit(x, y);
          expect(angleBetween(...back, ...unitFromLonLat(lon, lat))).toBeLessThan(1e-12);
          const [lon2, lat2] = proj.inverse(x, y);
          expect(angleBetween(...unitFromLonLat(lon2, lat2), ...unitFromLonLat(lon, lat))).toBeLessThan(1e-12);
        },
      ),
      { numRuns: 300 },
    );
  });

  it('has no image for the antipode of the centre, and no inverse beyond 2R', () => {
    const p = new LocalProjection(10, 20);
    expect(p.forward(-170, -20).every(Number.isNaN)).toBe(true);
    expect(p.inverseUnit(2 * EARTH_RADIUS_KM + 1, 0).every(Number.isNaN)).toBe(true);
  });

  describe('is equal-area: projected polygon area equals turf.area (spherical, R = 6371.0088 km)', () => {
    // turf.area (v7) sums over the ring on a sphere of radius 6371008.8 m, the same radius as ours;
    // both areas are taken of the same densified ring.
    const cases: { name: string; centre: [number, number]; ring: [number, number][] }[] = [
      {
        name: 'a 5 km square at the centre (Amsterdam)',
        centre: [4.9, 52.37],
        ring: [[4.865, 52.35], [4.935, 52.35], [4.935, 52.395], [4.865, 52.395], [4.865, 52.35]],
      },
      {
        name: 'an irregular 30 km polygon 800 km from the centre',
        centre: [4.9, 52.37],
        ring: [[14.9, 51.9], [15.3, 51.95], [15.25, 52.1], [15.05, 52.2], [14.85, 52.05], [14.9, 51.9]],
      },
      {
        name: 'a polygon near the north pole (Svalbard)',
        centre: [15.6, 78.2],
        ring: [[14.0, 78.0], [17.5, 78.05], [17.0, 78.5], [14.5, 78.45], [14.0, 78.0]],
      },
      {
        name: 'a polygon across the antimeridian (Fiji)',
        centre: [179.5, -17.0],
        ring: [[179.2, -16.6], [-179.6, -16.8], [-179.7, -17.4], [179.3, -17.3], [179.2, -16.6]],
      },
    ];
    for (const c of cases) {
      it(c.name, () => {
        // turf works on planar lon/lat rings: give it continuous longitudes across the antimeridian
        const unwrapped = c.ring.map(([lon, lat]) => [lon < 0 && c.centre[0] > 90 ? lon + 360 : lon, lat] as [number, number]);
        const ring = densify(unwrapped, 256);
        const ref = turfArea(turfPolygon([ring])) / 1e6;
        const proj = new LocalProjection(c.centre[0], c.centre[1]);
        // ... and the projection the same points with longitudes folded back into [-180, 180]
        const projected = ring.map(([lon, lat]) => proj.forward(lon > 180 ? lon - 360 : lon, lat));
        const got = shoelace(projected);
        // Left after densifying: the two methods' different straight-edge conventions (straight in
        // (lon, sin lat) for turf, straight on the projected plane here), which shrink as 1/parts^2
        // and stay below 5e-8 relative with 256 parts per edge in these cases.
        const tolerance = 2e-7;
        expect(Math.abs(got - ref) / ref).toBeLessThan(tolerance);
        // The check discriminates: an azimuthal equidistant map (rho = R c), which is not
        // equal-area (area scale about 1 + c^2 / 6 at angle c from the centre), fails it
        // once the polygon is some tens of km from the centre.
        const equidistant = projected.map(([x, y]) => {
          const rho = Math.hypot(x, y);
          if (rho === 0) return [0, 0] as [number, number];
          const angle = 2 * Math.asin(rho / (2 * EARTH_RADIUS_KM));
          const s = (angle * EARTH_RADIUS_KM) / rho;
          return [x * s, y * s] as [number, number];
        });
        const far = distanceKm(c.centre[0], c.centre[1], c.ring[0]![0], c.ring[0]![1]) > 30;
        if (far) expect(Math.abs(shoelace(equidistant) - ref) / ref).toBeGreaterThan(tolerance);
      });
    }
  });
});
