/**
 * The offline basemap: Natural Earth country outlines (world-atlas countries-110m, bundled) via
 * topojson-client. 110m rather than 50m keeps the bundle small and the first draw fast; zones
 * are drawn over it, so the coarse coastline is only orientation.
 */
import L from 'leaflet';
import { feature } from 'topojson-client';
import type { GeometryCollection, Topology } from 'topojson-specification';
import type { FeatureCollection, Geometry, Position } from 'geojson';
import countriesTopo from 'world-atlas/countries-110m.json';
import { LAND_COLOUR, OCEAN_COLOUR } from './palette.js';

/**
 * world-atlas rings that cross the antimeridian (Russia, Fiji, ...) would be drawn by Leaflet as
 * stripes across the world: shift the negative longitudes of crossing rings by +360. Polygons that
 * touch the south pole (Antarctica) are already drawn correctly and are left alone.
 */
export function unwrapAntimeridian<G extends Geometry>(fc: FeatureCollection<G>): FeatureCollection<G> {
  const crosses = (r: Position[]) => r.some((p, i) => i > 0 && Math.abs(p[0]! - r[i - 1]![0]!) > 180);
  const fixPolygon = (rings: Position[][]) =>
    !rings.some(crosses) || rings.some((r) => r.some((p) => p[1]! <= -89.9))
      ? rings
      : rings.map((r) => r.map((p) => (p[0]! < 0 ? [p[0]! + 360, ...p.slice(1)] : p)));
  const fix = (g: Geometry): Geometry =>
    g.type === 'Polygon'
      ? { ...g, coordinates: fixPolygon(g.coordinates) }
      : g.type === 'MultiPolygon'
        ? { ...g, coordinates: g.coordinates.map(fixPolygon) }
        : g;
  return { ...fc, features: fc.features.map((f) => (f.geometry ? { ...f, geometry: fix(f.geometry) as G } : f)) };
}

export { LAND_COLOUR, OCEAN_COLOUR };

export function offlineBasemap(renderer: L.Renderer): L.GeoJSON {
  const topo = countriesTopo as unknown as Topology<{ countries: GeometryCollection }>;
  const countries = feature(topo, topo.objects.countries) as FeatureCollection;
  return L.geoJSON(unwrapAntimeridian(countries), {
    style: { color: '#9a9a9a', weight: 0.6, fillColor: LAND_COLOUR, fillOpacity: 1 },
    interactive: false,
    renderer,
  } as L.GeoJSONOptions);
}
