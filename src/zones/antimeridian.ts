import { bboxPolygon, featureCollection, intersect, polygon as turfPolygon } from '@turf/turf';
import type { MultiPolygon, Polygon, Position } from 'geojson';

/** Makes a ring's longitudes continuous (no step over 180 degrees), starting near `ref`. */
function unwrap(ring: Position[], ref: number): Position[] {
  const out: Position[] = [];
  let shift = Math.round((ref - ring[0]![0]!) / 360) * 360;
  let prev = ring[0]![0]! + shift;
  for (const p of ring) {
    let lon = p[0]! + shift;
    while (lon - prev > 180) {
      lon -= 360;
      shift -= 360;
    }
    while (prev - lon > 180) {
      lon += 360;
      shift += 360;
    }
    out.push([lon, p[1]!]);
    prev = lon;
  }
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
