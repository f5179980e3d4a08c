import { parseStopsCsv } from '../io/csv.js';
import { parseStopsGeoJson } from '../io/geojson-stops.js';
import { formatOf } from '../io/read.js';
import type { StopSet } from '../io/stopset.js';
import type { StopFileOptions } from './types.js';

/**
 * Reads stops from the text of a file the planner dropped on the window or chose in it (the
 * file's name says its format where the options do not). Throws ImportError like the file reader.
 */
export function readStopsText(name: string, text: string, options: StopFileOptions = {}): StopSet {
  const body = text.startsWith('\uFEFF') ? text.slice(1) : text;
  const format = options.format ?? formatOf(name, body);
  return format === 'geojson' ? parseStopsGeoJson(body, name, options) : parseStopsCsv(body, name, options);
}
