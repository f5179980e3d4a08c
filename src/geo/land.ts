import { feature } from 'topojson-client';
import { booleanPointInPolygon } from '@turf/turf';
import type { Feature, MultiPolygon, Polygon } from 'geojson';
import type { GeometryCollection, Topology } from 'topojson-specification';
import landTopo from 'world-atlas/land-110m.json' with { type: 'json' };

/**
 * Coarse land mask of the world: Natural Earth 1:110m land (public domain), as packaged by the
 * world-atlas npm package. Good for plausibility checks (are these stops at sea?), not for
 * coastlines: small islands and a few km of coast are missing at this scale.
 */
interface LandPart {
  readonly feature: Feature<Polygon>;
  readonly bbox: [number, number, number, number];
}

let parts: LandPart[] | null = null;

function landParts(): LandPart[] {
  if (parts) return parts;
  const topo = landTopo as unknown as Topology<{ land: GeometryCollection }>;
  const fc = feature(topo, topo.objects.land);
  const list: LandPart[] = [];
  for (const f of fc.features) {
    const g = f.geometry as Polygon | MultiPolygon;
    const polys = g.type === 'Polygon' ? [g.coordinates] : g.coordinates;
    for (const rings of polys) {
      let minX = Infinity;
      let minY = Infinity;
      let maxX = -Infinity;
      let maxY = -Infinity;
      for (const [x, y] of rings[0]!) {
        if (x! < minX) minX = x!;
        if (x! > maxX) maxX = x!;
        if (y! < minY) minY = y!;
        if (y! > maxY) maxY = y!;
      }
      list.push({ feature: { type: 'Feature', properties: {}, geometry: { type: 'Polygon', coordinates: rings } }, bbox: [minX, minY, maxX, maxY] });
    }
  }
  parts = list;
  return list;
}

/** True when the position (degrees) falls on land in the 1:110m land mask. */
export function isOnLand(lon: number, lat: number): boolean {
  for (const p of landParts()) {
    const [minX, minY, maxX, maxY] = p.bbox;
    if (lon < minX || lon > maxX || lat < minY || lat > maxY) continue;
    if (booleanPointInPolygon([lon, lat], p.feature)) return true;
  }
  return false;
}
