/**
 * Where k-means on raw longitude/latitude is known to fail: across the antimeridian (lon 180
 * and -180 are the same meridian, 360 apart as numbers) and near the poles (all longitudes meet).
 * The planar reference is ml-kmeans run on [lon, lat] pairs, as a naive tool would.
 */
import { describe, expect, it } from 'vitest';
import { kmeans } from 'ml-kmeans';
import { solveZones } from '../../src/solve/kmeans.js';
import { distanceKm } from '../../src/geo/distance.js';
import { lonLatFromVector } from '../../src/geo/unit.js';
import { Random } from '../../src/util/random.js';
import { notNearest, stopsFromLonLat } from '../solve/support.js';

function centresLonLat(centres: Float64Array): [number, number][] {
  return Array.from({ length: centres.length / 3 }, (_, j) => lonLatFromVector(centres[3 * j]!, centres[3 * j + 1]!, centres[3 * j + 2]!));
}

/** n stops around (lon, lat), within +-spread degrees (longitudes wrapped into [-180, 180)). */
function cluster(r: Random, n: number, lon: number, lat: number, spread: number): [number, number][] {
  const out: [number, number][] = [];
  for (let i = 0; i < n; i++) {
    let x = lon + spread * (2 * r.next() - 1);
    if (x >= 180) x -= 360;
    if (x < -180) x += 360;
    out.push([x, lat + spread * (2 * r.next() - 1)]);
  }
  return out;
}

/** Best of several planar k-means runs on raw [lon, lat]. */
function planar(pts: [number, number][], k: number): number[] {
  let best: { clusters: number[]; sse: number } | null = null;
  for (let s = 1; s <= 8; s++) {
    const res = kmeans(pts.map((p) => [...p]), k, { seed: s, maxIterations: 500 });
    let sse = 0;
    pts.forEach((p, i) => {
      const c = res.centroids[res.clusters[i]!]!;
      sse += (p[0] - c[0]!) ** 2 + (p[1] - c[1]!) ** 2;
    });
    if (!best || sse < best.sse) best = { clusters: res.clusters, sse };
  }
  return best!.clusters;
}

describe('antimeridian', () => {
  const r = new Random(180);
  const east = cluster(r, 40, 179.9, -17, 0.03); // just west of the antimeridian (Fiji)
  const west = cluster(r, 40, -179.9, -17, 0.03); // just east of it
  const far = cluster(r, 40, 170, -17, 0.03); // 1000 km further west

  it('K = 1: two clusters at lon 179.9 and -179.9 get a centre on the antimeridian between them', () => {
    const pts = [...east, ...west];
    const result = solveZones(stopsFromLonLat(pts), { zones: 1, seed: 1 });
    const [[lon, lat]] = centresLonLat(result.centres) as [[number, number]];
    expect(Math.abs(lon)).toBeGreaterThan(179.95);
    expect(lat).toBeCloseTo(-17, 1);
    for (const [x, y] of pts) expect(distanceKm(lon, lat, x, y)).toBeLessThan(20);
    // The planar mean of the longitudes lands near the prime meridian: 180 degrees of longitude
    // away at lat 17 S, which is 146 degrees of arc (16 200 km) from every stop.
    const planarLon = pts.reduce((s, p) => s + p[0], 0) / pts.length;
    expect(Math.abs(planarLon)).toBeLessThan(10);
    for (const [x, y] of pts) expect(distanceKm(planarLon, lat, x, y)).toBeGreaterThan(15_000);
  });

  it('K = 2: the two sides of the antimeridian form ONE zone, the far cluster the other; planar lon/lat k-means splits them', () => {
    const pts = [...east, ...west, ...far];
    const input = stopsFromLonLat(pts);
    const result = solveZones(input, { zones: 2, seed: 1 });
    const a = result.assignment;
    const zoneOf = (from: number, to: number): Set<number> => new Set(Array.from(a.subarray(from, to)));
    const sides = zoneOf(0, 80);
    expect(sides.size).toBe(1);
    expect(zoneOf(80, 120).size).toBe(1);
    expect(zoneOf(80, 120).has([...sides][0]!)).toBe(false);
    expect(notNearest(input.units, result.centres, a)).toEqual([]);
    // centres: one on the antimeridian, one at lon 170
    const centres = centresLonLat(result.centres).map(([lon]) => Math.abs(lon)).sort((p, q) => p - q);
    expect(centres[0]).toBeCloseTo(170, 1);
    expect(centres[1]).toBeGreaterThan(179.95);
    // The naive planar clustering puts lon 179.9 and -179.9 (22 km apart) in different zones.
    const naive = planar(pts, 2);
    expect(naive[0]).not.toBe(naive[40]);
    expect(new Set(naive.slice(0, 40)).size).toBe(1);
    expect(new Set(naive.slice(40, 80)).size).toBe(1);
  });

  it('zones stay compact over the antimeridian with more zones (K = 4 on a belt from 175 E to 175 W)', () => {
    const belt: [number, number][] = [];
    const rb = new Random(7);
    for (let i = 0; i < 400; i++) {
      let lon = 175 + 10 * rb.next();
      if (lon >= 180) lon -= 360;
      belt.push([lon, -20 + 6 * rb.next()]);
    }
    const result = solveZones(stopsFromLonLat(belt), { zones: 4, seed: 2 });
    // every stop is within 500 km of its centre (the belt is about 1050 x 670 km)
    const centres = centresLonLat(result.centres);
    belt.forEach(([lon, lat], i) => {
      const [cl, ct] = centres[result.assignment[i]!]!;
      expect(distanceKm(lon, lat, cl, ct)).toBeLessThan(500);
    });
  });
});

describe('poles', () => {
  it('a ring of stops around the north pole has its centre at the pole; the planar mean is 111 km off', () => {
    const ring: [number, number][] = [];
    for (let lon = -180; lon < 180; lon += 10) ring.push([lon, 89]);
    for (const centre of ['mean', 'arc'] as const) {
      const result = solveZones(stopsFromLonLat(ring), { zones: 1, seed: 1, centre });
      const [[, lat]] = centresLonLat(result.centres) as [[number, number]];
      expect(lat).toBeGreaterThan(90 - 1e-9);
      // every stop is 1 degree of arc (111 km) from its centre: objective 36 x 111.19^2 km^2
      expect(result.objectiveKm2).toBeCloseTo(36 * distanceKm(0, 90, 0, 89) ** 2, 6);
    }
    const planarLat = ring.reduce((s, p) => s + p[1], 0) / ring.length;
    const planarLon = ring.reduce((s, p) => s + p[0], 0) / ring.length;
    expect(distanceKm(planarLon, planarLat, 0, 90)).toBeGreaterThan(110);
    // ... and the planar "centre" is 222 km from the stops across the pole from it
    expect(distanceKm(planarLon, planarLat, planarLon + 180, 89)).toBeGreaterThan(220);
  });

  it('stops straddling the pole (lon 0 and lon 180 at lat 89.5) get the pole, not the planar mean (lat 89.5, lon 30)', () => {
    const pts: [number, number][] = [[0, 89.5], [180, 89.5], [0, 89.6], [180, 89.6], [-180, 89.4], [0, 89.4]];
    const result = solveZones(stopsFromLonLat(pts), { zones: 1, seed: 1 });
    const [[, lat]] = centresLonLat(result.centres) as [[number, number]];
    expect(lat).toBeGreaterThan(89.99);
    // planar mean: lon 30, lat 89.5, which is 56 km from the pole and 100 km from the lon-180 stops
    const planarLon = pts.reduce((s, p) => s + p[0], 0) / pts.length;
    expect(distanceKm(planarLon, 89.5, 180, 89.5)).toBeGreaterThan(90);
  });

  it('two polar caps and K = 2: the centres are the two poles', () => {
    const caps: [number, number][] = [];
    for (let lon = -180; lon < 180; lon += 15) caps.push([lon, 85], [lon + 7.5, -85]);
    const result = solveZones(stopsFromLonLat(caps), { zones: 2, seed: 3 });
    const lats = centresLonLat(result.centres).map(([, lat]) => lat).sort((p, q) => p - q);
    expect(lats[0]).toBeLessThan(-90 + 1e-9);
    expect(lats[1]).toBeGreaterThan(90 - 1e-9);
  });

  it('K = 3 on a ring at lat 75: each zone is one run of longitudes, the one across 180 included', () => {
    const ring: [number, number][] = [];
    for (let t = 0; t < 72; t++) ring.push([-180 + 5 * t + 2.5, 75]);
    const result = solveZones(stopsFromLonLat(ring), { zones: 3, seed: 4 });
    const a = [...result.assignment];
    // going round the ring, the zone changes exactly 3 times (circularly)
    let changes = 0;
    for (let t = 0; t < 72; t++) if (a[t] !== a[(t + 1) % 72]) changes++;
    expect(changes).toBe(3);
    // the planar lon/lat clustering cuts the ring at the antimeridian: stops at lon 177.5 and
    // -177.5 (145 km apart) end in different zones
    const naive = planar(ring, 3);
    expect(naive[0]).not.toBe(naive[71]);
    // the zones are balanced thirds of the ring
    const counts = [0, 0, 0];
    for (const z of a) counts[z]!++;
    expect(counts.every((c) => c >= 22 && c <= 26)).toBe(true);
  });
});
