/**
 * Zone polygons as a partition of the service area, checked with @turf/turf 7.4.0 and
 * geojson-validation on the geometries as written (see ./support.ts for every check).
 *
 * Sources of the requirements (the issue):
 * [P] "Polygons that partition a service area: no overlaps between zones, no gaps inside the area,
 *     each zone's polygon holding its stops. By default the service area is the hull of all stops
 *     buffered by a margin in km; a user-supplied service-area polygon (GeoJSON) replaces it. Where
 *     capacity or locks put a stop inside another zone's territory, keep the partition clean and
 *     count and list those stops rather than drawing slivers."
 * [V] "valid rings (no self-intersections), holes where a zone encloses another."
 * [A] "Continental extents and zones crossing the antimeridian produce valid RFC 7946 output
 *     (split at the antimeridian), not polygons that wrap the globe."
 * [R] RFC 7946: section 3.1.6 (exterior rings counter-clockwise, holes clockwise), 3.1.9
 *     (antimeridian cutting), 4 (no "crs"), 11.2 (6 decimals).
 */
import { beforeAll, describe, expect, it } from 'vitest';
import path from 'node:path';
import * as turf from '@turf/turf';
import type { Polygon } from 'geojson';
import { readStopsFile } from '../../src/io/read.js';
import { readServiceAreaFile } from '../../src/io/zone-files.js';
import { solveZones } from '../../src/solve/kmeans.js';
import { solveStops } from '../../src/api/plan-file.js';
import { zoneBoundaries, type Boundaries } from '../../src/zones/boundaries.js';
import { Random } from '../../src/util/random.js';
import { geometryJson } from '../../src/io/plan-geojson.js';
import {
  TURF_AREA_FACTOR,
  antimeridianProblems,
  destination,
  discStops,
  flatLonLat,
  inside,
  partitionReport,
  polygonsOf,
  ringsOf,
  solvePoints,
  thinParts,
  turfKm2,
  unitsOf,
  type PartitionReport,
  type Poly,
} from './support.js';

const root = path.resolve(import.meta.dirname, '../..');
const demoFile = path.join(root, 'demo-data', 'tallowmere-stops.csv');
const islandsFile = path.join(root, 'demo-data', 'sefa-visits.geojson');
const areaFile = path.join(root, 'test', 'fixtures', 'areas', 'tallowmere-west-lake.geojson');

interface Case {
  readonly lonLat: Float64Array;
  readonly assignment: Int32Array;
  readonly b: Boundaries;
  readonly report: PartitionReport;
}

function drawn(lonLat: Float64Array, units: Float64Array, assignment: Int32Array, k: number, name: string, options = {}): Case {
  const b = zoneBoundaries(units, assignment, k, options);
  return { lonLat, assignment, b, report: partitionReport(b, lonLat, assignment, name) };
}

/** The checks that hold for every case ([P], [V], [R]). */
function expectCleanPartition(c: Case): void {
  expect(c.report.valid).toEqual([]);
  expect(c.report.kinks).toEqual([]);
  expect(c.report.overlaps).toEqual([]);
  expect(c.report.gaps).toEqual([]);
  expect(c.report.stops).toEqual([]);
  expect(c.report.areas).toEqual([]);
}

function antimeridianOf(c: Case): string[] {
  return [...c.b.zones.flatMap((g, j) => (g ? antimeridianProblems(g, `zone ${j}`) : [])), ...antimeridianProblems(c.b.serviceArea, 'service area')];
}

describe('the checks themselves catch what they look for', () => {
  // A 2 x 1 block of stops split into two zones; each defect is put into a copy of the result.
  const pts: [number, number][] = [];
  const asg: number[] = [];
  const r = new Random(5);
  for (let i = 0; i < 80; i++) {
    const lon = 10 + 0.2 * r.next();
    pts.push([lon, 48 + 0.1 * r.next()]);
    asg.push(lon < 10.1 ? 0 : 1);
  }
  const lonLat = flatLonLat(pts);
  const assignment = Int32Array.from(asg);
  const good = zoneBoundaries(unitsOf(lonLat), assignment, 2);
  const report = (b: Boundaries): PartitionReport => partitionReport(b, lonLat, assignment, 'test');
  const shifted = (g: Poly, dLon: number): Poly => JSON.parse(JSON.stringify(g), (key, v) => (Array.isArray(v) && typeof v[0] === 'number' ? [v[0] + dLon, v[1]] : v)) as Poly;

  it('a clean result passes', () => {
    expectCleanPartition({ lonLat, assignment, b: good, report: report(good) });
  });

  it('an overlap, a gap, a stop out of its polygon, a wrong area, a reversed ring, a bow tie', () => {
    const overlap = report({ ...good, zones: [shifted(good.zones[0]!, 0.01), good.zones[1]!] });
    expect(overlap.overlaps.length).toBeGreaterThan(0);
    const gap = report({ ...good, zones: [shifted(good.zones[0]!, -0.01), good.zones[1]!] });
    expect(gap.gaps.length).toBeGreaterThan(0);
    expect(gap.stops.length).toBeGreaterThan(0);
    const area = report({ ...good, areaKm2: Float64Array.from([good.areaKm2[0]! * 1.01, good.areaKm2[1]!]) });
    expect(area.areas.length).toBeGreaterThan(0);
    const g0 = good.zones[0] as Polygon;
    const reversed: Polygon = { type: 'Polygon', coordinates: [[...g0.coordinates[0]!].reverse()] };
    expect(report({ ...good, zones: [reversed, good.zones[1]!] }).valid.join('\n')).toMatch(/exterior ring is clockwise/);
    const bowTie: Polygon = { type: 'Polygon', coordinates: [[[10, 48], [10.1, 48.1], [10.1, 48], [10, 48.1], [10, 48]]] };
    expect(report({ ...good, zones: [bowTie, good.zones[1]!] }).kinks.length).toBeGreaterThan(0);
  });

  it('turf.area works on the same sphere as Zoneplan (so TURF_AREA_FACTOR is 1 with turf 7.4.0)', () => {
    // A 0.1 x 0.1 degree cell: exact area on a sphere of radius R is R^2 dLon (sin lat1 - sin lat0).
    const R = 6371.0088;
    const exact = R * R * ((0.1 * Math.PI) / 180) * (Math.sin((48.1 * Math.PI) / 180) - Math.sin((48 * Math.PI) / 180));
    const cell = turf.polygon([[[10, 48], [10.1, 48], [10.1, 48.1], [10, 48.1], [10, 48]]]);
    expect(turfKm2(cell) / exact).toBeCloseTo(1, 4);
    // @turf/area 6.x used 6378137 m, a factor (6378.137 / 6371.0088)^2 = 1.0022 larger; 7.4.0 uses 6371008.8 m.
    expect(TURF_AREA_FACTOR).toBeCloseTo(1, 12);
  });
});

describe('the demo: 4201 stops, 12 zones, default service area (hull + 2 km) [P] [V] [R]', () => {
  let c: Case;
  beforeAll(() => {
    const s = readStopsFile(demoFile);
    const r = solveZones({ units: s.units, demand: s.demand }, { zones: 12, seed: 3 });
    c = drawn(s.lonLat, s.units, r.assignment, 12, 'demo');
  });

  it('partitions the service area: valid, wound per RFC 7946, no kinks, no overlaps, no gaps, every stop in its own zone, areas as turf measures them', () => {
    expectCleanPartition(c);
    expect(c.report.maxOverlapShare).toBeLessThan(1e-6);
    expect(Math.abs(c.report.unionRatio - 1)).toBeLessThan(1e-3);
    expect(c.report.maxAreaError).toBeLessThan(5e-3);
    expect(c.b.zones.every((g) => g !== null)).toBe(true);
  });

  it('plain k-means zones are cells of their centres: no stop lies in another zone, and no zone has a detached part', () => {
    expect(Array.from(c.b.outside)).toEqual([]);
    expect(Array.from(c.b.beyondArea)).toEqual([]);
    expect(thinParts(c.report.written, c.lonLat, c.assignment, 0.1)).toEqual([]);
  });

  it('the default service area is the hull of the stops plus 2 km: every stop at least ~2 km inside its edge', () => {
    const edge = turf.polygonToLine(turf.feature(c.b.serviceArea as Polygon));
    let nearest = Infinity;
    for (let i = 0; i < c.assignment.length; i += 7) {
      nearest = Math.min(nearest, turf.pointToLineDistance([c.lonLat[2 * i]!, c.lonLat[2 * i + 1]!], edge as never, { units: 'kilometers' }));
    }
    expect(nearest).toBeGreaterThan(1.95);
    expect(nearest).toBeLessThan(2.05);
  });
});

describe('a continental extent: 3000 stops over Europe (10 W - 30 E, 36 - 60 N), 15 zones [A] [P]', () => {
  let c: Case;
  beforeAll(() => {
    const r = new Random(2024);
    const pts: [number, number][] = [];
    for (let i = 0; i < 3000; i++) pts.push([-10 + 40 * r.next(), 36 + 24 * r.next()]);
    const lonLat = flatLonLat(pts);
    const s = solvePoints(lonLat, 15);
    c = drawn(lonLat, s.units, s.assignment, 15, 'europe');
  });

  it('valid RFC 7946 rings, no kinks, no overlaps, every stop in its own zone', () => {
    expect(c.report.valid).toEqual([]);
    expect(c.report.kinks).toEqual([]);
    expect(c.report.overlaps).toEqual([]);
    expect(c.report.stops).toEqual([]);
    expect(antimeridianOf(c)).toEqual([]);
  });

  // Was a bug, fixed in src/zones/boundaries.ts (ringToLonLat densifies edges to 5 km):
  // zone and service-area edges are straight lines in the equal-area plane, but only their
  // end points are written; RFC 7946 (section 3.1.1) reads an edge as straight in [lon, lat], and
  // so does turf. Hull edges of a continental extent are hundreds of km long (along 36 N, about
  // 3500 km), so the polygon written is not the one whose areaKm2 is reported.
  // Input: the 3000 stops above, solveZones K = 15 seed 1, zoneBoundaries default options.
  // Expected: turf.area of each written zone within 0.5% of areaKm2, and of the service area within
  // 0.5% of serviceAreaKm2. Actual: zones 3, 5, 8 are 1.20%, 1.09%, 1.56% apart (e.g. zone 8:
  // turf 449486 km2, areaKm2 456629 km2); the service area: turf 7832398 km2, serviceAreaKm2 8005226 km2 (2.2%).
  it('areaKm2 is the area of the polygon written (edges densified to 5 km when written back to [lon, lat])', () => {
    expect(c.report.areas).toEqual([]);
  });

  // Same cause: the zones have extra vertices where the Voronoi edges meet the service area's edge,
  // the service-area geometry only the hull's, so in [lon, lat] they no longer cover the same ground.
  // Expected: union of the zones / service area (turf.area) within 0.1% of 1. Actual: 1.020055.
  it('the zones and the service area geometry cover the same ground: union within 0.1% (same fix)', () => {
    expect(c.report.gaps).toEqual([]);
  });
});

describe('a continental extent across the antimeridian: 2000 stops, 150 E - 150 W, 50 - 70 N, 10 zones [A]', () => {
  let c: Case;
  beforeAll(() => {
    const r = new Random(77);
    const pts: [number, number][] = [];
    for (let i = 0; i < 2000; i++) {
      let lon = 150 + 60 * r.next();
      if (lon > 180) lon -= 360;
      pts.push([lon, 50 + 20 * r.next()]);
    }
    const lonLat = flatLonLat(pts);
    const s = solvePoints(lonLat, 10);
    c = drawn(lonLat, s.units, s.assignment, 10, 'pacific');
  });

  it('split at the antimeridian: every ring within [-180, 180], none spanning over 180 degrees; some zone has parts on both sides', () => {
    expect(antimeridianOf(c)).toEqual([]);
    const crossing = c.report.written.filter((g) => g && ringsOf(g).some((r) => r.some((p) => p[0] === 180)) && ringsOf(g).some((r) => r.some((p) => p[0] === -180)));
    expect(crossing.length).toBeGreaterThan(0);
  });

  it('valid, no kinks, no overlaps, every stop in its own zone', () => {
    expect(c.report.valid).toEqual([]);
    expect(c.report.kinks).toEqual([]);
    expect(c.report.overlaps).toEqual([]);
    expect(c.report.stops).toEqual([]);
  });

  // Was a bug (the one of the European extent), same fix. Input: the 2000 stops above, solvePoints K = 10 seed 1.
  // Expected: areas within 0.5%. Actual: zone 0 1.98%, zone 2 2.87% (turf 829613 km2 vs areaKm2
  // 854087 km2); service area turf 7294293 km2 vs serviceAreaKm2 7594038 km2; union 1.0365.
  it('areaKm2 is the area of the polygon written (edges densified)', () => {
    expect(c.report.areas).toEqual([]);
  });
});

describe('islands across the antimeridian (demo-data/sefa-visits.geojson) [A] [R 3.1.9]', () => {
  let islands: ReturnType<typeof readStopsFile>;
  beforeAll(() => {
    islands = readStopsFile(islandsFile);
  });

  for (const k of [1, 5, 8]) {
    it(`K = ${k}: zones crossing 180 are split into parts within [-180, 180], none wrapping the globe; the partition is clean`, () => {
      const r = solveZones({ units: islands.units, demand: islands.demand }, { zones: k, seed: 1 });
      const c = drawn(islands.lonLat, islands.units, r.assignment, k, `islands K=${k}`);
      expectCleanPartition(c);
      expect(antimeridianOf(c)).toEqual([]);
      // The islands straddle 180: some zone (with K = 1 the only one) has a part ending at +180
      // and one starting at -180, and its area is that of a few islands' worth, not of the globe.
      const crossing = c.report.written.filter((g) => g && ringsOf(g).some((ring) => ring.some((p) => p[0] === 180)) && ringsOf(g).some((ring) => ring.some((p) => p[0] === -180)));
      expect(crossing.length).toBeGreaterThan(0);
      for (const g of crossing) expect(g!.type).toBe('MultiPolygon');
      expect(c.b.serviceAreaKm2).toBeLessThan(50_000);
      expect(turfKm2(c.b.serviceArea)).toBeLessThan(50_000);
    });
  }

  // Was a bug, fixed in unwrap (src/zones/antimeridian.ts): the default service area (no
  // options) on the bundled demo data, with more zones.
  // Input: demo-data/sefa-visits.geojson, solveZones {zones: 11, seed: 1} (also 13 and 14 with
  // seed 2), zoneBoundaries(units, assignment, 11). Expected: a clean partition as for K = 1, 5, 8.
  // Actual: Error "First and last Position are not equivalent." from turf.polygon in
  // splitAtAntimeridian: unwrap (src/zones/antimeridian.ts) adds the running shift to every
  // position, and x - 360 + 360 is not always x in floating point, so a ring that crosses 180 and
  // comes back can end one ulp away from where it starts. The CLI then fails with "internal
  // error", exit 1 (see test/cli/export.test.ts). Fix: close each unwrapped ring with a copy of its
  // own first position (or compute lon + shift once per position from integer turns).
  it('K = 11 (seed 1): a clean partition (no "First and last Position are not equivalent.")', () => {
    const r = solveZones({ units: islands.units, demand: islands.demand }, { zones: 11, seed: 1 });
    const c = drawn(islands.lonLat, islands.units, r.assignment, 11, 'islands K=11');
    expectCleanPartition(c);
  });
});

describe('near the pole: stops at 78 - 81 N around a point (the pole outside) [A] [P]', () => {
  for (const [lon, name] of [
    [20, 'Svalbard, 20 E'],
    [180, 'on the antimeridian'],
  ] as const) {
    it(`${name}: a clean partition that leaves out the pole (split where it crosses 180)`, () => {
      const lonLat = flatLonLat(discStops(9, 800, lon, 79.5, 160));
      let minLat = 90;
      let maxLat = -90;
      for (let i = 1; i < lonLat.length; i += 2) {
        minLat = Math.min(minLat, lonLat[i]!);
        maxLat = Math.max(maxLat, lonLat[i]!);
      }
      expect(minLat).toBeGreaterThan(78);
      expect(maxLat).toBeLessThan(81);
      const s = solvePoints(lonLat, 6);
      const c = drawn(lonLat, s.units, s.assignment, 6, name);
      expectCleanPartition(c);
      expect(antimeridianOf(c)).toEqual([]);
      for (const g of c.report.written) {
        for (const ring of ringsOf(g!)) for (const p of ring) expect(p[1]).toBeLessThan(81.1);
        expect(inside(g, 0, 89.999)).toBe(false);
      }
      // A disc of radius ~162 km: ~82 000 km2, not a band around the pole.
      expect(c.b.serviceAreaKm2).toBeGreaterThan(75_000);
      expect(c.b.serviceAreaKm2).toBeLessThan(90_000);
    });
  }
});

describe('a user service area (test/fixtures/areas/tallowmere-west-lake.geojson: west of 11.3 E, a lake cut out) [P]', () => {
  let c: Case;
  let area: Poly;
  let beyondByTurf: number[];
  let s: ReturnType<typeof readStopsFile>;
  let r: ReturnType<typeof solveZones>;
  beforeAll(() => {
    s = readStopsFile(demoFile);
    r = solveZones({ units: s.units, demand: s.demand }, { zones: 12, seed: 3 });
    area = readServiceAreaFile(areaFile);
    c = drawn(s.lonLat, s.units, r.assignment, 12, 'service area', { serviceArea: area });
    beyondByTurf = [];
    for (let i = 0; i < s.ids.length; i++) if (!turf.booleanPointInPolygon([s.lonLat[2 * i]!, s.lonLat[2 * i + 1]!], area)) beyondByTurf.push(i);
  });

  it('the zones partition that polygon, not the hull: union = the fixture by turf.area, and all of it within the fixture', () => {
    expectCleanPartition(c);
    const union = turf.union(turf.featureCollection(c.report.written.filter((g): g is Poly => g !== null).map((g) => turf.feature(g))))!;
    expect(turf.area(union) / turf.area(area)).toBeCloseTo(1, 3);
    const within = turf.intersect(turf.featureCollection([union, turf.feature(area)]))!;
    expect(turf.area(within) / turf.area(union)).toBeCloseTo(1, 3);
    expect(c.b.serviceAreaKm2 / turfKm2(area)).toBeCloseTo(1, 3);
  });

  it('stops outside the polygon (east of 11.3 E, and in the lake) are counted in beyondArea, exactly those', () => {
    expect(beyondByTurf.length).toBeGreaterThan(300);
    expect(Array.from(c.b.beyondArea)).toEqual(beyondByTurf);
    const inLake = beyondByTurf.filter((i) => s.lonLat[2 * i]! > 10.55 && s.lonLat[2 * i]! < 10.71 && s.lonLat[2 * i + 1]! > 48.76 && s.lonLat[2 * i + 1]! < 48.85);
    expect(inLake.length).toBeGreaterThan(0);
    // A stop in the lake lies in no zone's polygon.
    for (const i of inLake) expect(c.report.written.some((g) => inside(g, s.lonLat[2 * i]!, s.lonLat[2 * i + 1]!))).toBe(false);
  });

  it('the lake is a hole: no zone covers its middle', () => {
    for (const g of c.report.written) expect(inside(g, 10.63, 48.805)).toBe(false);
  });

  it('a service area wound the wrong way round (exterior clockwise) gives the same zones', () => {
    const reversed: Poly = { type: 'Polygon', coordinates: (area as Polygon).coordinates.map((ring) => [...ring].reverse()) };
    const again = zoneBoundaries(s.units, r.assignment, 12, { serviceArea: reversed });
    expect(Array.from(again.areaKm2).map((a) => a.toFixed(3))).toEqual(Array.from(c.b.areaKm2).map((a) => a.toFixed(3)));
    expect(Array.from(again.beyondArea)).toEqual(Array.from(c.b.beyondArea));
  });
});

describe('a user service area across the antimeridian (test/fixtures/areas/sefa-across-180.geojson: a MultiPolygon cut at 180) [A] [P]', () => {
  const saFile = path.join(root, 'test', 'fixtures', 'areas', 'sefa-across-180.geojson');

  for (const k of [1, 3]) {
    it(`K = ${k}: the zones partition it, split at 180, every stop in its zone`, () => {
      const islands = readStopsFile(islandsFile);
      const area = readServiceAreaFile(saFile);
      const r = solveZones({ units: islands.units, demand: islands.demand }, { zones: k, seed: 1 });
      const c = drawn(islands.lonLat, islands.units, r.assignment, k, `islands in the area K=${k}`, { serviceArea: area });
      expectCleanPartition(c);
      expect(antimeridianOf(c)).toEqual([]);
      expect(Array.from(c.b.beyondArea)).toEqual([]);
      expect(c.b.serviceAreaKm2 / turfKm2(area)).toBeCloseTo(1, 3);
    });
  }

  // Was a bug, fixed in unwrap (src/zones/antimeridian.ts): zoneBoundaries threw for a service
  // area given the way RFC 7946 section 3.1.9 asks
  // (cut at the antimeridian). Input: demo-data/sefa-visits.geojson, solveZones K = 5 seed 1,
  // zoneBoundaries(units, assignment, 5, {serviceArea: readServiceAreaFile(sefa-across-180.geojson)})
  // (K = 4, 6, 8 too). Expected: zones partitioning the area, as for K = 1 and 3.
  // Actual: Error "First and last Position are not equivalent." from turf.polygon in
  // splitAtAntimeridian (src/zones/antimeridian.ts, turfPolygon(all)): a clipped ring starts at
  // lon 179.99999998234745; unwrap shifts it by -360 and back by +360, and the closing position
  // comes out as 179.9999999823474, one ulp off the first. planLayers catches only RangeError, so
  // `zoneplan plan demo-data/sefa-visits.geojson --zones 5 --out f --service-area
  // test/fixtures/areas/sefa-across-180.geojson` ends in "internal error", exit 1.
  it('K = 5: a clean partition (ring closure kept in unwrap)', () => {
    const islands = readStopsFile(islandsFile);
    const r = solveZones({ units: islands.units, demand: islands.demand }, { zones: 5, seed: 1 });
    const c = drawn(islands.lonLat, islands.units, r.assignment, 5, 'islands in the area K=5', { serviceArea: readServiceAreaFile(saFile) });
    expectCleanPartition(c);
  });
});

describe('stops in another zone\'s territory are listed, not drawn as slivers [P]', () => {
  // A jittered 20 x 10 grid (about 1.1 km apart): columns 0-9 zone 0, 10-19 zone 1; the stop of
  // column 15, row 5 belongs to zone 0 although it sits amid zone 1 (as a lock or capacity would put it).
  const pts: [number, number][] = [];
  const asg: number[] = [];
  let stray = -1;
  const r = new Random(31);
  for (let x = 0; x < 20; x++) {
    for (let y = 0; y < 10; y++) {
      if (x === 15 && y === 5) stray = pts.length;
      pts.push([10 + x * 0.01 + 0.003 * (r.next() - 0.5), 48 + y * 0.01 + 0.003 * (r.next() - 0.5)]);
      asg.push(x < 10 || (x === 15 && y === 5) ? 0 : 1);
    }
  }
  const lonLat = flatLonLat(pts);
  const units = unitsOf(lonLat);
  const assignment = Int32Array.from(asg);

  it('the stray stop is listed in outside and lies in zone 1\'s polygon; zone 0 has one part, zone 1 no hole', () => {
    const c = drawn(lonLat, units, assignment, 2, 'enclave');
    expectCleanPartition(c);
    expect(Array.from(c.b.outside)).toEqual([stray]);
    expect(inside(c.report.written[1]!, pts[stray]![0], pts[stray]![1])).toBe(true);
    expect(c.report.written[0]!.type).toBe('Polygon');
    expect(c.report.written[1]!.type).toBe('Polygon');
    expect((c.report.written[1] as Polygon).coordinates).toHaveLength(1);
    expect(thinParts(c.report.written, lonLat, assignment, 0.1)).toEqual([]);
  });

  it('(without the absorbing of small parts, minPartShare 0, the stray stop would be a one-stop island of zone 0)', () => {
    const b = zoneBoundaries(units, assignment, 2, { minPartShare: 0 });
    expect(Array.from(b.outside)).toEqual([]);
    expect(b.zones[0]!.type).toBe('MultiPolygon');
    expect(thinParts(b.zones, lonLat, assignment, 0.1)).toHaveLength(1);
  });

  it('locked stops of the demo (test/fixtures/zones/locks.csv, 6 zones): those in another zone are listed, no slivers', async () => {
    const s = readStopsFile(demoFile);
    const solved = await solveStops(s, { zones: 6, seed: 3, threads: 1, locksFile: path.join(root, 'test', 'fixtures', 'zones', 'locks.csv') });
    const c = drawn(s.lonLat, s.units, solved.plan.assignment, 6, 'locks');
    expectCleanPartition(c);
    expect(c.b.outside.length).toBeGreaterThan(0);
    // Only locked stops are out of place: TC-00500, TC-01500, TC-02500, TC-03500, TC-04000.
    const locked = new Set(Array.from(solved.plan.locked!.entries()).filter(([, z]) => z >= 0).map(([i]) => i));
    expect(locked.size).toBe(5);
    for (const i of c.b.outside) expect(locked.has(i)).toBe(true);
    expect(thinParts(c.report.written, s.lonLat, solved.plan.assignment, 0.1)).toEqual([]);
  });

  it('capacity (1700 per zone on the demo, 6 zones): stops pushed over a border are listed, no slivers', async () => {
    const s = readStopsFile(demoFile);
    const solved = await solveStops(s, { zones: 6, seed: 3, capacity: 1700, threads: 1 });
    expect(solved.plan.limits?.feasible).toBe(true);
    const c = drawn(s.lonLat, s.units, solved.plan.assignment, 6, 'capacity');
    expectCleanPartition(c);
    expect(c.b.outside.length).toBeGreaterThan(0);
    expect(thinParts(c.report.written, s.lonLat, solved.plan.assignment, 0.1)).toEqual([]);
  });
});

describe('a zone enclosed by another has a hole [V]', () => {
  it('a ring of zone A (5 - 10 km out) around a town of zone B (within 2 km): A is a polygon with one hole, B fills it', () => {
    const town = discStops(3, 60, 10, 48, 2);
    const rr = new Random(4);
    const ring: [number, number][] = [];
    for (let i = 0; i < 200; i++) ring.push(destination(10, 48, 5 + 5 * rr.next(), 360 * rr.next()));
    const lonLat = flatLonLat([...ring, ...town]);
    const assignment = Int32Array.from([...ring.map(() => 0), ...town.map(() => 1)]);
    const c = drawn(lonLat, unitsOf(lonLat), assignment, 2, 'hole');
    expectCleanPartition(c);
    const a = c.report.written[0]!;
    const b = c.report.written[1]!;
    expect(a.type).toBe('Polygon');
    expect((a as Polygon).coordinates).toHaveLength(2);
    expect(turf.booleanClockwise((a as Polygon).coordinates[1]!)).toBe(true);
    expect(b.type).toBe('Polygon');
    expect((b as Polygon).coordinates).toHaveLength(1);
    // B is the hole: same area, and the town centre is in B, not in A.
    const hole = turf.polygon([[...(a as Polygon).coordinates[1]!].reverse()]);
    expect(turf.area(b) / turf.area(hole)).toBeCloseTo(1, 6);
    expect(inside(a, 10, 48)).toBe(false);
    expect(inside(b, 10, 48)).toBe(true);
    expect(c.b.areaKm2[1]! / (c.b.areaKm2[0]! + c.b.areaKm2[1]!)).toBeLessThan(0.2);
  });

  it('A around B around A: A is two parts (one with a hole), B a polygon with a hole', () => {
    const r = new Random(11);
    const pts: [number, number][] = [];
    const asg: number[] = [];
    for (let i = 0; i < 60; i++) {
      pts.push(destination(10, 48, 2 * Math.sqrt(r.next()), 360 * r.next()));
      asg.push(0);
    }
    for (let i = 0; i < 100; i++) {
      pts.push(destination(10, 48, 4 + 2 * r.next(), 360 * r.next()));
      asg.push(1);
    }
    for (let i = 0; i < 200; i++) {
      pts.push(destination(10, 48, 8 + 4 * r.next(), 360 * r.next()));
      asg.push(0);
    }
    const lonLat = flatLonLat(pts);
    const assignment = Int32Array.from(asg);
    const c = drawn(lonLat, unitsOf(lonLat), assignment, 2, 'nested');
    expectCleanPartition(c);
    const a = c.report.written[0]!;
    expect(a.type).toBe('MultiPolygon');
    expect(polygonsOf(a).map((rings) => rings.length).sort()).toEqual([1, 2]);
    expect(polygonsOf(c.report.written[1]!).map((rings) => rings.length)).toEqual([2]);
  });
});

describe('stops on a regular grid (degenerate Voronoi: four sites on a circle) [V]', () => {
  // Was a bug, fixed in geometryJson (src/io/plan-geojson.ts, ringJson) and bufferConvex
  // (src/zones/planar.ts): geometryJson rounded to 6 decimals but kept positions that became equal, so the written
  // rings repeat a position, which turf.kinks reports as a self-intersection.
  // Input: a 20 x 10 grid, lon 10 + 0.01 x, lat 48 + 0.01 y (x 0..19, y 0..9); zone 0 for x < 10
  // (and for the stop x = 15, y = 5), zone 1 else; zoneBoundaries(units, assignment, 2), then
  // geometryJson. Expected: no repeated consecutive positions, turf.kinks none.
  // Actual: zone 0's exterior ring repeats [9.973078,48.079997] and 7 more positions (turf.kinks:
  // 7 points), zone 1's repeats 9, among them [10.095,48.065] (turf.kinks: 5). Causes: on the
  // service area's edge, d3-delaunay's hull keeps collinear points and bufferConvex emits the same
  // offset point twice at each (a0 = a1, steps = 1), so the clipped rings carry vertices 2.6e-9
  // degrees apart; inside, four sites on a circle give two circumcentres a hair apart (more than
  // dropRepeats' 1e-12 km). Rounding makes each pair one position. (The raw geometry has no kinks.)
  // Fix in geometryJson: drop a position equal to the one before it after rounding.
  const pts: [number, number][] = [];
  const asg: number[] = [];
  for (let x = 0; x < 20; x++) {
    for (let y = 0; y < 10; y++) {
      pts.push([10 + x * 0.01, 48 + y * 0.01]);
      asg.push(x < 10 || (x === 15 && y === 5) ? 0 : 1);
    }
  }
  const lonLat = flatLonLat(pts);
  const assignment = Int32Array.from(asg);

  it('the partition is otherwise clean', () => {
    const c = drawn(lonLat, unitsOf(lonLat), assignment, 2, 'grid');
    expect(c.report.valid).toEqual([]);
    expect(c.report.overlaps).toEqual([]);
    expect(c.report.gaps).toEqual([]);
    expect(c.report.stops).toEqual([]);
    expect(c.report.areas).toEqual([]);
  });

  it('written rings repeat no position after rounding to 6 decimals (turf.kinks finds no self-intersection)', () => {
    const b = zoneBoundaries(unitsOf(lonLat), assignment, 2);
    const repeats: string[] = [];
    b.zones.forEach((g, j) => {
      const w = JSON.parse(geometryJson(g!)) as Poly;
      for (const ring of ringsOf(w)) for (let t = 1; t < ring.length; t++) if (ring[t]![0] === ring[t - 1]![0] && ring[t]![1] === ring[t - 1]![1]) repeats.push(`zone ${j}: ${JSON.stringify(ring[t])}`);
    });
    expect(repeats).toEqual([]);
    expect(partitionReport(b, lonLat, assignment, 'grid').kinks).toEqual([]);
  });
});
