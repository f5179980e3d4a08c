/**
 * Checks shared by the zone boundary and export tests (not a test file itself: vitest only runs
 * *.test.ts). Each check returns a list of problems (empty when all is well), so that a failing
 * test says what is wrong and where.
 *
 * Reference implementations used, none of them Zoneplan's own code:
 * - geojson-validation 1.0.2 for the structure of RFC 7946 objects;
 * - @mapbox/geojson-rewind 0.5.2, rewind(gj, false), for the winding RFC 7946 section 3.1.6 asks
 *   for (exterior rings counter-clockwise, holes clockwise), and turf.booleanClockwise beside it;
 * - @turf/turf 7.4.0 for overlaps (intersect), coverage (union), areas (area), point in polygon
 *   (booleanPointInPolygon) and self-intersections (kinks).
 */
import * as turf from '@turf/turf';
import * as GJV from 'geojson-validation';
import rewind from '@mapbox/geojson-rewind';
import type { Feature, FeatureCollection, Geometry, MultiPolygon, Polygon, Position } from 'geojson';
import type { Boundaries } from '../../src/zones/boundaries.js';
import { geometryJson } from '../../src/io/plan-geojson.js';
import { solveZones } from '../../src/solve/kmeans.js';
import { unitFromLonLat } from '../../src/geo/unit.js';
import { EARTH_RADIUS_KM } from '../../src/geo/constants.js';
import { Random } from '../../src/util/random.js';

/**
 * turf.area / TURF_AREA_FACTOR = km^2 on Zoneplan's sphere (mean radius 6371.0088 km).
 * @turf/area 6.x used the WGS84 equatorial radius 6378137 m, which makes its areas larger by
 * (6378.137 / 6371.0088)^2 = 1.0022; @turf/area 7.4.0 (installed) uses turf's earthRadius,
 * 6371008.8 m (node_modules/@turf/helpers: earthRadius = 63710088e-1), the same mean radius as
 * Zoneplan, so the factor is 1. Taken from turf itself so that either holds.
 */
export const TURF_AREA_FACTOR = (turf.earthRadius / 1000 / EARTH_RADIUS_KM) ** 2;

export type Poly = Polygon | MultiPolygon;

/** Polygons of a Polygon or MultiPolygon, as lists of rings. */
export function polygonsOf(g: Poly): Position[][][] {
  return g.type === 'Polygon' ? [g.coordinates] : g.coordinates;
}

export function ringsOf(g: Poly): Position[][] {
  return polygonsOf(g).flat();
}

/** Area in Zoneplan's km^2 (mean-radius sphere) by turf.area. */
export function turfKm2(g: Poly | Feature<Poly>): number {
  return turf.area(g as Feature<Poly>) / 1e6 / TURF_AREA_FACTOR;
}

/** Unit vectors from a flat [lon, lat, lon, lat, ...] list. */
export function unitsOf(lonLat: ArrayLike<number>): Float64Array {
  const n = lonLat.length / 2;
  const u = new Float64Array(3 * n);
  for (let i = 0; i < n; i++) u.set(unitFromLonLat(lonLat[2 * i]!, lonLat[2 * i + 1]!), 3 * i);
  return u;
}

/** Flat [lon, lat, ...] from pairs. */
export function flatLonLat(points: readonly (readonly [number, number])[]): Float64Array {
  const out = new Float64Array(2 * points.length);
  points.forEach(([lon, lat], i) => {
    out[2 * i] = lon;
    out[2 * i + 1] = lat;
  });
  return out;
}

/** The point `km` from (lon, lat) at `bearingDeg` on the sphere of radius 6371.0088 km. */
export function destination(lon: number, lat: number, km: number, bearingDeg: number): [number, number] {
  const d = km / EARTH_RADIUS_KM;
  const b = (bearingDeg * Math.PI) / 180;
  const p1 = (lat * Math.PI) / 180;
  const l1 = (lon * Math.PI) / 180;
  const p2 = Math.asin(Math.sin(p1) * Math.cos(d) + Math.cos(p1) * Math.sin(d) * Math.cos(b));
  const l2 = l1 + Math.atan2(Math.sin(b) * Math.sin(d) * Math.cos(p1), Math.cos(d) - Math.sin(p1) * Math.sin(p2));
  let lonOut = (l2 * 180) / Math.PI;
  lonOut = ((((lonOut + 180) % 360) + 360) % 360) - 180;
  return [lonOut, (p2 * 180) / Math.PI];
}

/** n stops uniformly in a disc of radius `km` around (lon, lat), deterministic from `seed`. */
export function discStops(seed: number, n: number, lon: number, lat: number, km: number): [number, number][] {
  const r = new Random(seed);
  const out: [number, number][] = [];
  for (let i = 0; i < n; i++) out.push(destination(lon, lat, km * Math.sqrt(r.next()), 360 * r.next()));
  return out;
}

/** A solved assignment for stops given as [lon, lat] pairs (plain k-means, fixed seed). */
export function solvePoints(points: Float64Array, k: number, seed = 1): { units: Float64Array; demand: Float64Array; assignment: Int32Array; centres: Float64Array } {
  const units = unitsOf(points);
  const demand = new Float64Array(points.length / 2).fill(1);
  const r = solveZones({ units, demand }, { zones: k, seed, restarts: 2 });
  return { units, demand, assignment: r.assignment, centres: r.centres };
}

function decimalsOf(v: number): number {
  const s = String(v);
  if (/e/i.test(s)) return Number.POSITIVE_INFINITY;
  const dot = s.indexOf('.');
  return dot < 0 ? 0 : s.length - dot - 1;
}

function allPositions(g: Geometry): Position[] {
  switch (g.type) {
    case 'Point':
      return [g.coordinates];
    case 'MultiPoint':
    case 'LineString':
      return g.coordinates;
    case 'MultiLineString':
    case 'Polygon':
      return g.coordinates.flat();
    case 'MultiPolygon':
      return g.coordinates.flat(2);
    case 'GeometryCollection':
      return g.geometries.flatMap(allPositions);
  }
}

/**
 * RFC 7946 problems of a GeoJSON document (as parsed): what geojson-validation rejects; a "crs"
 * member anywhere (section 4 removed it); positions not [lon -180..180, lat -90..90] (section
 * 3.1.1 / 4); more than 6 decimals (section 11.2); rings not wound as rewind(gj, false) winds them
 * (section 3.1.6), and, by turf.booleanClockwise, an exterior ring clockwise or a hole not.
 */
export function rfc7946Problems(doc: unknown, name: string, checkDecimals = true): string[] {
  const problems: string[] = [];
  const trace = GJV.valid(doc, true);
  if (trace.length > 0) problems.push(`${name}: geojson-validation: ${trace.slice(0, 5).join('; ')}`);
  const d = doc as FeatureCollection & { crs?: unknown };
  if ('crs' in (d as object)) problems.push(`${name}: has a "crs" member`);
  const features: Feature[] = d.type === 'FeatureCollection' ? d.features : d.type === 'Feature' ? [d as unknown as Feature] : [];
  features.forEach((f, t) => {
    if ('crs' in f) problems.push(`${name} feature ${t}: has a "crs" member`);
    const g = f.geometry;
    if (!g) return;
    for (const p of allPositions(g)) {
      if (!(Math.abs(p[0]!) <= 180 && Math.abs(p[1]!) <= 90)) problems.push(`${name} feature ${t}: position ${JSON.stringify(p)} out of range`);
      if (checkDecimals && p.some((v) => decimalsOf(v) > 6)) problems.push(`${name} feature ${t}: position ${JSON.stringify(p)} has more than 6 decimals`);
    }
    if (g.type === 'Polygon' || g.type === 'MultiPolygon') {
      const wound = rewind(structuredClone(g), false);
      if (JSON.stringify(wound) !== JSON.stringify(g)) problems.push(`${name} feature ${t}: rings not wound as geojson-rewind (RFC 7946) winds them`);
      polygonsOf(g).forEach((rings, q) =>
        rings.forEach((ring, r) => {
          const cw = turf.booleanClockwise(ring);
          if (r === 0 && cw) problems.push(`${name} feature ${t} polygon ${q}: exterior ring is clockwise`);
          if (r > 0 && !cw) problems.push(`${name} feature ${t} polygon ${q} ring ${r}: hole is counter-clockwise`);
        }),
      );
    }
  });
  return problems;
}

/** Rings of a geometry that leave [-180, 180] or span more than 180 degrees of longitude (wrap the globe). */
export function antimeridianProblems(g: Poly, name: string): string[] {
  const problems: string[] = [];
  ringsOf(g).forEach((ring, r) => {
    const lons = ring.map((p) => p[0]!);
    const min = Math.min(...lons);
    const max = Math.max(...lons);
    if (min < -180 || max > 180) problems.push(`${name} ring ${r}: longitudes ${min}..${max} leave [-180, 180]`);
    if (max - min > 180) problems.push(`${name} ring ${r}: spans ${(max - min).toFixed(3)} degrees of longitude (wraps the globe)`);
  });
  return problems;
}

/** Whether the stop at [lon, lat] lies in a zone geometry (turf.booleanPointInPolygon). */
export function inside(g: Poly | null, lon: number, lat: number): boolean {
  return g !== null && turf.booleanPointInPolygon([lon, lat], g);
}

export interface PartitionReport {
  /** geojson-validation, "crs", ranges, 6 decimals, winding (rfc7946Problems) of every zone. */
  readonly valid: string[];
  /** turf.kinks self-intersections. */
  readonly kinks: string[];
  /** Pairs of zones whose intersection has area >= 1e-6 of the service area. */
  readonly overlaps: string[];
  /** Union of the zones against the service area (turf.area of each, 0.1%). */
  readonly gaps: string[];
  /** Stops not in their own zone's polygon yet not listed, or listed wrongly. */
  readonly stops: string[];
  /** turf.area against areaKm2 / serviceAreaKm2 (0.5%); zone areas adding up to the service area. */
  readonly areas: string[];
  /** Largest pairwise intersection area over the service area's. */
  readonly maxOverlapShare: number;
  /** turf area of the union of the zones over turf area of the service area. */
  readonly unionRatio: number;
  /** Largest |turf.area - areaKm2| / areaKm2 over the zones. */
  readonly maxAreaError: number;
  /** The zone geometries as written (geometryJson), by zone index. */
  readonly written: (Poly | null)[];
}

/**
 * Zone polygons as a partition of their service area, checked by turf on the geometries as
 * written to files (geometryJson: rewound, 6 decimals); the raw Boundaries geometries must be
 * valid and wound right too:
 * - pairwise intersections of area < 1e-6 of the service area (no overlaps);
 * - the union of the zones = the service area (turf.area of each) within 0.1%; sample points:
 *   under 0.5% of the service area's in no zone (gaps), as few outside it in a zone (spill);
 * - every stop inside its own zone's polygon (turf.booleanPointInPolygon), except those listed in
 *   `outside` (which must lie in exactly one other zone's polygon) and `beyondArea` (which must
 *   lie outside the service area);
 * - turf.area (over TURF_AREA_FACTOR) agrees with areaKm2 within 0.5%, and the zones' areaKm2 add
 *   up to serviceAreaKm2.
 */
export function partitionReport(b: Boundaries, lonLat: ArrayLike<number>, assignment: Int32Array, name: string): PartitionReport {
  const valid: string[] = [];
  const kinks: string[] = [];
  const overlaps: string[] = [];
  const gaps: string[] = [];
  const stops: string[] = [];
  const areas: string[] = [];
  const k = b.zones.length;
  const feats: Feature<Poly>[] = [];
  const written = b.zones.map((g) => (g ? (JSON.parse(geometryJson(g)) as Poly) : null));
  b.zones.forEach((g, j) => {
    if (!g) return;
    valid.push(...rfc7946Problems(turf.feature(g), `${name} zone ${j} (Boundaries)`, false));
    const f = turf.feature(written[j]!, { zone: j });
    feats.push(f);
    valid.push(...rfc7946Problems(f, `${name} zone ${j} (as written)`));
    const found = turf.kinks(f).features;
    if (found.length > 0) kinks.push(`${name} zone ${j}: turf.kinks finds ${found.length} self-intersection(s), e.g. at ${JSON.stringify(found[0]!.geometry.coordinates)}`);
  });
  const areaTurf = turf.area(turf.feature(b.serviceArea));
  let maxOverlapShare = 0;
  for (let a = 0; a < feats.length; a++) {
    for (let c = a + 1; c < feats.length; c++) {
      const x = turf.intersect(turf.featureCollection([feats[a]!, feats[c]!]));
      if (!x) continue;
      const share = turf.area(x) / areaTurf;
      maxOverlapShare = Math.max(maxOverlapShare, share);
      if (share >= 1e-6) overlaps.push(`${name}: zones ${feats[a]!.properties!.zone} and ${feats[c]!.properties!.zone} overlap by ${share.toExponential(2)} of the service area`);
    }
  }
  const union = feats.length === 1 ? feats[0]! : turf.union(turf.featureCollection(feats));
  const unionRatio = union ? turf.area(union) / areaTurf : 0;
  if (!(Math.abs(unionRatio - 1) < 1e-3)) gaps.push(`${name}: the union of the zones is ${unionRatio.toFixed(6)} of the service area by turf.area`);
  // Gap and spill separately (a shifted zone leaves a gap as large as its spill), on a grid of
  // sample points over each part of the service area (cell centres; turf.booleanPointInPolygon):
  // in the service area a point must lie in one zone, outside it in none.
  let inArea = 0;
  let gap = 0;
  let spill = 0;
  for (const part of polygonsOf(b.serviceArea)) {
    const [w, so, e, no] = turf.bbox(turf.polygon(part));
    const steps = 90;
    for (let a = 0; a < steps; a++) {
      for (let c = 0; c < steps; c++) {
        const lon = w + ((e - w) * (a + 0.5)) / steps;
        const lat = so + ((no - so) * (c + 0.5)) / steps;
        const held = written.filter((g) => inside(g, lon, lat)).length;
        if (turf.booleanPointInPolygon([lon, lat], b.serviceArea)) {
          inArea++;
          if (held === 0) gap++;
        } else if (held > 0) spill++;
      }
    }
  }
  if (!(gap <= 5e-3 * inArea)) gaps.push(`${name}: ${gap} of ${inArea} sample points of the service area lie in no zone`);
  if (!(spill <= 5e-3 * inArea)) gaps.push(`${name}: ${spill} sample points outside the service area lie in a zone (against ${inArea} in it)`);
  const outside = new Set(b.outside);
  const beyond = new Set(b.beyondArea);
  for (let i = 0; i < assignment.length; i++) {
    const lon = lonLat[2 * i]!;
    const lat = lonLat[2 * i + 1]!;
    const own = inside(written[assignment[i]!] ?? null, lon, lat);
    if (outside.has(i) || beyond.has(i)) {
      if (own) stops.push(`${name}: stop ${i} is listed outside its zone but lies in zone ${assignment[i]}'s polygon`);
      const others = written.filter((g, j) => j !== assignment[i] && inside(g, lon, lat)).length;
      if (outside.has(i) && !beyond.has(i) && others !== 1) stops.push(`${name}: stop ${i} is listed in another zone's territory but lies in ${others} other zones' polygons`);
      if (beyond.has(i) && turf.booleanPointInPolygon([lon, lat], b.serviceArea)) stops.push(`${name}: stop ${i} is listed beyond the service area but lies in it`);
    } else if (!own) stops.push(`${name}: stop ${i} (${lon}, ${lat}) of zone ${assignment[i]} is not in its zone's polygon and not listed in outside`);
  }
  let maxAreaError = 0;
  let sum = 0;
  for (let j = 0; j < k; j++) {
    const g = written[j];
    sum += b.areaKm2[j]!;
    if (!g) {
      if (b.areaKm2[j] !== 0) areas.push(`${name} zone ${j}: no polygon but areaKm2 ${b.areaKm2[j]}`);
      continue;
    }
    const err = Math.abs(turfKm2(g) - b.areaKm2[j]!) / b.areaKm2[j]!;
    maxAreaError = Math.max(maxAreaError, err);
    if (!(err < 5e-3)) areas.push(`${name} zone ${j}: turf.area = ${turfKm2(g).toFixed(3)} km2, areaKm2 = ${b.areaKm2[j]!.toFixed(3)} (${(100 * err).toFixed(2)}% apart)`);
  }
  if (!(Math.abs(sum - b.serviceAreaKm2) <= 1e-6 * b.serviceAreaKm2)) areas.push(`${name}: zone areas add up to ${sum} km2, the service area is ${b.serviceAreaKm2} km2`);
  const saTurf = areaTurf / 1e6 / TURF_AREA_FACTOR;
  if (!(Math.abs(saTurf - b.serviceAreaKm2) < 5e-3 * b.serviceAreaKm2)) areas.push(`${name}: the service area is ${saTurf.toFixed(3)} km2 by turf.area, serviceAreaKm2 = ${b.serviceAreaKm2.toFixed(3)}`);
  return { valid, kinks, overlaps, gaps, stops, areas, maxOverlapShare, unionRatio, maxAreaError, written };
}

/**
 * Detached parts of zones that hold fewer than `share` of their zone's stops (slivers around a
 * stray stop, or empty parts), by turf.booleanPointInPolygon per part. Not for zones split at
 * the antimeridian, whose halves are one territory.
 */
export function thinParts(zones: (Poly | null)[], lonLat: ArrayLike<number>, assignment: Int32Array, share: number): string[] {
  const out: string[] = [];
  zones.forEach((g, j) => {
    if (!g || g.type === 'Polygon') return;
    let total = 0;
    for (const a of assignment) if (a === j) total++;
    g.coordinates.forEach((rings, q) => {
      const part = turf.polygon(rings);
      let held = 0;
      for (let i = 0; i < assignment.length; i++) if (assignment[i] === j && turf.booleanPointInPolygon([lonLat[2 * i]!, lonLat[2 * i + 1]!], part)) held++;
      if (held < share * total) out.push(`zone ${j} part ${q}: ${held} of its ${total} stops, ${(turf.area(part) / 1e6).toFixed(3)} km2`);
    });
  });
  return out;
}
