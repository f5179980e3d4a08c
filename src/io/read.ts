import { readFileSync, statSync } from 'node:fs';
import path from 'node:path';
import { getHeapStatistics } from 'node:v8';
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
    throw fileError(name, 'too-large', `the file is ${(size / 2 ** 20).toFixed(0)} MB; files over ${MAX_WHOLE_FILE_BYTES / 2 ** 20} MB (about 10 million stops) are not read: split it into smaller files`);
  }
  const memory = memoryShortfall(size, options.format ?? (/\.(geo)?json$/i.test(file) ? 'geojson' : 'csv'));
  if (memory) throw fileError(name, 'too-large', memory);
  let bytes: Buffer;
  try {
    bytes = readFileSync(file);
  } catch (e) {
    const code = (e as NodeJS.ErrnoException).code;
    throw fileError(name, 'unreadable', `cannot be read (${code ?? String(e)})`);
  }
  return readStopsBytes(name, bytes, options);
}

/**
 * Stops from a file's bytes (a file read here, or one the planner dropped on the window): the
 * encoding found as for files on disk (byte order mark, UTF-16 without one, UTF-8, else
 * Windows-1252, with a warning), binary files refused, the format from the options, the name's
 * extension or the text. Throws ImportError.
 */
export function readStopsBytes(name: string, bytes: Uint8Array, options: ReadStopsOptions = {}): StopSet {
  if (bytes.length > MAX_WHOLE_FILE_BYTES) {
    throw fileError(name, 'too-large', `the file is ${(bytes.length / 2 ** 20).toFixed(0)} MB; files over ${MAX_WHOLE_FILE_BYTES / 2 ** 20} MB (about 10 million stops) are not read: split it into smaller files`);
  }
  const decoded = decodeText(bytes);
  refuseBinary(name, bytes, decoded.text);
  const format = options.format ?? formatOf(name, decoded.text);
  const stops = format === 'geojson' ? parseStopsGeoJson(decoded.text, name, options) : parseStopsCsv(decoded.text, name, options);
  if (decoded.noBom) {
    return {
      ...stops,
      warnings: [
        { severity: 'warning', file: name, code: 'encoding', message: `the file has no byte order mark but its bytes are ${decoded.encoding.toUpperCase()} text; it was read as such` },
        ...stops.warnings,
      ],
    };
  }
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

/**
 * JavaScript heap a read takes per byte of file, measured with scripts/stress-import.mjs: a
 * 145 MB CSV of 5 million stops needs a heap limit between 512 MB (out of memory) and 768 MB (reads),
 * i.e. 3.5 to 5.3 bytes per byte (the text, the ids, the parser's rows). GeoJSON's parsed object
 * tree is larger: 12 per byte is an estimate (common practice for JSON.parse, no measurement here).
 */
const HEAP_PER_BYTE = { csv: 4.5, geojson: 12 } as const;

/**
 * A message when reading a file of `size` bytes would need more heap than this process may still
 * use (V8 aborts the whole process on an exhausted heap, which no catch can turn into a message),
 * else null.
 */
export function memoryShortfall(size: number, format: 'csv' | 'geojson', heap = getHeapStatistics()): string | null {
  const need = size * HEAP_PER_BYTE[format];
  const free = heap.heap_size_limit - heap.used_heap_size;
  if (need <= free) return null;
  const mb = (b: number): string => `${Math.ceil(b / 2 ** 20)} MB`;
  return `the file is ${mb(size)}; reading it needs about ${mb(need)} of memory, and this Zoneplan may use ${mb(free)} more (of a ${mb(heap.heap_size_limit)} limit): split the file, or allow more memory, e.g. NODE_OPTIONS=--max-old-space-size=${Math.ceil((need + heap.used_heap_size) / 2 ** 20 / 256) * 256 + 256}`;
}

export function formatOf(file: string, text: string): 'csv' | 'geojson' {
  const ext = path.extname(file).toLowerCase();
  if (ext === '.geojson' || ext === '.json') return 'geojson';
  if (ext === '.csv' || ext === '.tsv' || ext === '.txt') return 'csv';
  return /^\s*[{[]/.test(text) ? 'geojson' : 'csv';
}

/** File types a stops file is often mistaken for, by their first bytes (their published magic numbers). */
const MAGIC: readonly { bytes: readonly number[]; what: string }[] = [
  { bytes: [0x50, 0x4b, 0x03, 0x04], what: 'a ZIP archive (an .xlsx or .ods workbook, or a zipped file): save the sheet as CSV, or unzip the file, first' },
  { bytes: [0x50, 0x4b, 0x05, 0x06], what: 'an empty ZIP archive' },
  { bytes: [0xd0, 0xcf, 0x11, 0xe0, 0xa1, 0xb1, 0x1a, 0xe1], what: 'an old Excel (.xls) or other Office file: save the sheet as CSV first' },
  { bytes: [0x1f, 0x8b], what: 'a gzip-compressed file: unpack it first' },
  { bytes: [0x25, 0x50, 0x44, 0x46, 0x2d], what: 'a PDF document' },
  { bytes: [0x53, 0x51, 0x4c, 0x69, 0x74, 0x65, 0x20, 0x66, 0x6f, 0x72, 0x6d, 0x61, 0x74, 0x20, 0x33, 0x00], what: 'an SQLite database (a .zoneplan project?), not a stops file' },
  { bytes: [0x89, 0x50, 0x4e, 0x47], what: 'a PNG image' },
  { bytes: [0xff, 0xd8, 0xff], what: 'a JPEG image' },
  { bytes: [0x37, 0x7a, 0xbc, 0xaf, 0x27, 0x1c], what: 'a 7-Zip archive: unpack it first' },
];

/**
 * Refuses files that are not text: a known binary format by its magic number, else text with
 * control characters (other than tab and line breaks) in the first 64 K characters: any NUL, or
 * more than 8 and over 1% of them (thresholds chosen by us, no source; a stray escape character
 * in a cell is not binary, and is shown escaped in messages). Shared by every reader of input files.
 */
export function refuseBinary(file: string, bytes: Uint8Array, text: string): void {
  for (const m of MAGIC) {
    if (bytes.length >= m.bytes.length && m.bytes.every((b, i) => bytes[i] === b)) {
      throw fileError(file, 'binary-file', `this is ${m.what}; Zoneplan reads CSV or GeoJSON text`);
    }
  }
  const n = Math.min(text.length, 65536);
  let controls = 0;
  let firstAt = -1;
  let nul = false;
  for (let i = 0; i < n; i++) {
    const c = text.charCodeAt(i);
    if ((c < 32 && c !== 9 && c !== 10 && c !== 13) || c === 0x7f) {
      controls++;
      if (firstAt < 0) firstAt = i;
      if (c === 0) nul = true;
    }
  }
  if (nul || controls > Math.max(8, 0.01 * n)) {
    let line = 1;
    for (let i = 0; i < firstAt; i++) if (text.charCodeAt(i) === 10) line++;
    throw fileError(
      file,
      'binary-file',
      `the file holds binary data, not text (${controls} control character${controls === 1 ? '' : 's'} in the first ${n} characters, the first on line ${line}); Zoneplan reads CSV or GeoJSON text`,
      { row: line },
    );
  }
}
