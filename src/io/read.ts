import { readFileSync, statSync } from 'node:fs';
import path from 'node:path';
import { decodeText } from './decode.js';
import { parseStopsCsv, type CsvOptions } from './csv.js';
import { parseStopsGeoJson } from './geojson-stops.js';
import { fileError } from './problems.js';
import type { StopSet } from './stopset.js';

export interface ReadStopsOptions extends CsvOptions {
  /** File format; by extension (.csv .tsv .txt / .geojson .json) or by content when not given. */
  readonly format?: 'csv' | 'geojson';
}

/** Largest file read whole into memory (V8 strings stop near 512 M characters). */
export const MAX_WHOLE_FILE_BYTES = 400 * 1024 * 1024;

/** Reads stops from a CSV or GeoJSON file. Throws ImportError for anything wrong with it. */
export function readStopsFile(file: string, options: ReadStopsOptions = {}): StopSet {
  const name = file;
  let size: number;
  try {
    const st = statSync(file);
    if (st.isDirectory()) throw fileError(name, 'not-a-file', 'this is a folder, not a stops file');
    size = st.size;
  } catch (e) {
    if (e instanceof Error && e.name === 'ImportError') throw e;
    const code = (e as NodeJS.ErrnoException).code;
    throw fileError(name, 'unreadable', code === 'ENOENT' ? 'no such file' : code === 'EACCES' ? 'permission denied' : `cannot be read (${code ?? String(e)})`);
  }
  if (size > MAX_WHOLE_FILE_BYTES) {
    throw fileError(name, 'too-large', `the file is ${(size / 2 ** 20).toFixed(0)} MB; files over ${MAX_WHOLE_FILE_BYTES / 2 ** 20} MB must be split, or imported with the streaming reader`);
  }
  let bytes: Buffer;
  try {
    bytes = readFileSync(file);
  } catch (e) {
    const code = (e as NodeJS.ErrnoException).code;
    throw fileError(name, 'unreadable', `cannot be read (${code ?? String(e)})`);
  }
  const decoded = decodeText(bytes);
  const format = options.format ?? formatOf(file, decoded.text);
  const stops = format === 'geojson' ? parseStopsGeoJson(decoded.text, name, options) : parseStopsCsv(decoded.text, name, options);
  if (decoded.fallbackAt) {
    return {
      ...stops,
      warnings: [
        {
          severity: 'warning',
          file: name,
          code: 'encoding',
          message: `the file is not valid UTF-8 (first at line ${decoded.fallbackAt.line}); it was read as Windows-1252 (Latin-1): check that names with accents look right`,
        },
        ...stops.warnings,
      ],
    };
  }
  return stops;
}

export function formatOf(file: string, text: string): 'csv' | 'geojson' {
  const ext = path.extname(file).toLowerCase();
  if (ext === '.geojson' || ext === '.json') return 'geojson';
  if (ext === '.csv' || ext === '.tsv' || ext === '.txt') return 'csv';
  return /^\s*[{[]/.test(text) ? 'geojson' : 'csv';
}
