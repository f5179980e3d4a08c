import { parseStopsCsv } from '../io/csv.js';
import { parseStopsGeoJson } from '../io/geojson-stops.js';
import { formatOf, readStopsBytes, readStopsFile } from '../io/read.js';
import type { StopSet } from '../io/stopset.js';
import type { ImportSource } from './app-types.js';
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

/** Stops from what the window imports: a file on the main side, a file's bytes (base64) or its text. Throws ImportError. */
export function readStopsSource(source: ImportSource, options: StopFileOptions = {}): StopSet {
  if ('file' in source) return readStopsFile(source.file, options);
  if ('base64' in source) return readStopsBytes(source.name, Buffer.from(source.base64, 'base64'), options);
  return readStopsText(source.name, source.text, options);
}
