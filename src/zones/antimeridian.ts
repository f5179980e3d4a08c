import { bboxPolygon, featureCollection, intersect, polygon as turfPolygon } from '@turf/turf';
import type { MultiPolygon, Polygon, Position } from 'geojson';

/**
 * Makes a ring's longitudes continuous (no step over 180 degrees), starting near `ref`.
 * Each longitude is its own value plus a whole number of turns (lon + shift, computed once per
 * position): adjusting an already shifted value (lon - 360) would round differently from
 * lon + (shift - 360), so a ring that crosses 180 and comes back could end one ulp away from its
 * start, which turf rejects ("First and last Position are not equivalent"). A closed ring is
 * closed again with a copy of its first position.
 */
function unwrap(ring: Position[], ref: number): Position[] {
  const out: Position[] = [];
  let shift = Math.round((ref - ring[0]![0]!) / 360) * 360;
  let prev = ring[0]![0]! + shift;
  for (const p of ring) {
    while (p[0]! + shift - prev > 180) shift -= 360;
    while (prev - (p[0]! + shift) > 180) shift += 360;
    const lon = p[0]! + shift;
    out.push([lon, p[1]!]);
    prev = lon;
  }
  const first = ring[0]!;
  const last = ring[ring.length - 1]!;
  if (ring.length > 1 && first[0] === last[0] && first[1] === last[1]) out[out.length - 1] = [out[0]![0]!, out[0]![1]!];
  return out;
}

/**
 * Polygons in [lon, lat] whose rings may cross the antimeridian (as drawn in a continuous
 * plane) to valid RFC 7946 geometry: every ring made continuous, and a polygon that reaches past
 * +-180 cut at the antimeridian into parts that are shifted back into [-180, 180]
 * (RFC 7946, section 3.1.9). Returns a Polygon for one part, else a MultiPolygon.
 */
export function splitAtAntimeridian(polys: Position[][][]): Polygon | MultiPolygon {
  const parts: Position[][][] = [];
  for (const rings of polys) {
    const outer = unwrap(rings[0]!, rings[0]![0]![0]!);
    const ref = outer[0]![0]!;
    const all = [outer, ...rings.slice(1).map((h) => unwrap(h, ref))];
    let min = Infinity;
    let max = -Infinity;
    for (const p of outer) {
      min = Math.min(min, p[0]!);
      max = Math.max(max, p[0]!);
    }
    if (min >= -180 && max <= 180) {
      parts.push(all);
      continue;
    }
    const shape = turfPolygon(all);
    for (const offset of [-360, 0, 360]) {
      const box = bboxPolygon([-180 + offset, -90, 180 + offset, 90]);
      const piece = intersect(featureCollection([shape, box]));
      if (!piece) continue;
      const pieceParts = piece.geometry.type === 'Polygon' ? [piece.geometry.coordinates] : piece.geometry.coordinates;
      for (const pr of pieceParts) parts.push(pr.map((ring) => ring.map((p) => [p[0]! - offset, p[1]!])));
    }
  }
  return parts.length === 1 ? { type: 'Polygon', coordinates: parts[0]! } : { type: 'MultiPolygon', coordinates: parts };
}
