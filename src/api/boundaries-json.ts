import { layerGeoJsonChunks } from '../io/plan-geojson.js';
import { planLayers, type SolvedPlan } from './plan-file.js';

/**
 * A plan's zone polygons as one GeoJSON FeatureCollection (properties: zone, name and the zone's
 * figures), or null when they cannot be drawn; with the notes on why or on stops outside.
 */
export function boundariesGeoJson(solved: SolvedPlan): { geojson: unknown; notes: string[] } {
  const layers = planLayers(solved);
  if (!layers.boundaries) return { geojson: null, notes: layers.notes };
  return { geojson: JSON.parse([...layerGeoJsonChunks(layers, 'zones')].join('')) as unknown, notes: layers.notes };
}
