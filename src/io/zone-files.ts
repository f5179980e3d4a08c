import { readFileSync, statSync } from 'node:fs';
import Papa from 'papaparse';
import * as GJV from 'geojson-validation';
import type { MultiPolygon, Polygon, Position } from 'geojson';
import { decodeText } from './decode.js';
import { readNumber } from './numbers.js';
import { ImportError, ProblemLog, fileError, showValue } from './problems.js';
import { readStopsFile, formatOf, refuseBinary } from './read.js';
import { detectDelimiter, excelSepLine, listColumns, oneKindOfLineBreak } from './csv.js';
import { normaliseName } from './fields.js';
import type { StopSet } from './stopset.js';
import { describeJsonError, nestingDepth } from './geojson-stops.js';

/** Fixed depots: the first zones of a plan, which keep their centres where the depots are. */
export interface DepotSet {
  readonly source: string;
  readonly ids: readonly string[];
  /** Unit vectors, interleaved. */
  readonly units: Float64Array;
  readonly lonLat: Float64Array;
  /** Capacity per depot from the file's capacity column, or null where none was given. */
  readonly capacity: readonly (number | null)[];
  readonly warnings: StopSet['warnings'];
}

const CAPACITY_NAMES = ['capacity', 'cap', 'maxdemand', 'maxload', 'limit'];

function readText(file: string): string {
  let bytes: Buffer;
  try {
    if (statSync(file).isDirectory()) throw fileError(file, 'not-a-file', 'this is a folder, not a file');
    bytes = readFileSync(file);
  } catch (e) {
    if (e instanceof ImportError) throw e;
    const code = (e as NodeJS.ErrnoException).code;
    throw fileError(file, 'unreadable', code === 'ENOENT' ? 'no such file' : code === 'EACCES' ? 'permission denied' : `cannot be read (${code ?? String(e)})`);
  }
  const text = decodeText(bytes).text;
  refuseBinary(file, bytes, text);
  return text;
}

/** The name of the capacity column (CSV header or first feature's properties), if any. */
function capacityField(file: string, text: string): string | null {
  if (formatOf(file, text) === 'geojson') {
    try {
      const doc = JSON.parse(text.replace(/^\uFEFF/, '')) as { features?: { properties?: Record<string, unknown> }[] };
      const props = doc.features?.[0]?.properties ?? {};
      return Object.keys(props).find((k) => CAPACITY_NAMES.includes(normaliseName(k))) ?? null;
    } catch {
      return null; // the stop reader reports the JSON error
    }
  }
  const { body, delimiter } = csvBody(text);
  const firstLine = body.split(/\r?\n|\r/, 1)[0] ?? '';
  const header = Papa.parse<string[]>(firstLine, { delimiter }).data[0] ?? [];
  return header.map((h) => h.trim()).find((h) => CAPACITY_NAMES.includes(normaliseName(h))) ?? null;
}

/**
 * Reads fixed depots (CSV or GeoJSON, checked like stops: id, latitude, longitude), with an
 * optional capacity column (capacity, cap, max_demand, ...; an empty cell: no capacity of its
 * own). Throws ImportError naming row and field for anything wrong.
 */
export function readDepotsFile(file: string): DepotSet {
  const text = readText(file);
  const set = readStopsFile(file, { demand: null });
  const cap = capacityField(file, text);
  const capacity: (number | null)[] = set.ids.map(() => null);
  if (cap) {
    const log = new ProblemLog(file);
    const values = capacityValues(file, text, cap);
    set.rows.forEach((row, i) => {
      const raw = values.get(row);
      if (raw === undefined || raw === null || (typeof raw === 'string' && raw.trim() === '')) return;
      const cell = typeof raw === 'number' ? { ok: Number.isFinite(raw), value: raw } : readNumber(String(raw), decimalCommaAllowed(file, text));
      const where = set.format === 'csv' ? { row } : { feature: row };
      if (!cell.ok || !('value' in cell)) log.error({ code: 'bad-capacity', ...where, field: cap, value: showValue(raw), message: 'capacity must be a finite number (or empty for none)' });
      else if (cell.value < 0) log.error({ code: 'bad-capacity', ...where, field: cap, value: showValue(raw), message: 'capacity must not be negative' });
      else capacity[i] = cell.value;
    });
    log.throwIfErrors();
  }
  return {
    source: file,
    ids: set.ids,
    units: set.units,
    lonLat: set.lonLat,
    capacity,
    warnings: set.warnings.filter((w) => w.code !== 'duplicate-position'),
  };
}

/** A decimal comma ("12,5") is unambiguous in a semicolon- or tab-separated CSV, as in stops files. */
function decimalCommaAllowed(file: string, text: string): boolean {
  if (formatOf(file, text) === 'geojson') return false;
  const body = text.replace(/^\uFEFF/, '');
  const sep = excelSepLine(body);
  if (sep) return sep.delimiter !== ',';
  return detectDelimiter(body.split(/\r?\n|\r/, 1)[0] ?? '') !== ',';
}

/** Raw capacity values by CSV row (header = 1) or GeoJSON feature index. */
function capacityValues(file: string, text: string, field: string): Map<number, unknown> {
  const out = new Map<number, unknown>();
  if (formatOf(file, text) === 'geojson') {
    const doc = JSON.parse(text.replace(/^\uFEFF/, '')) as { features: { properties?: Record<string, unknown> }[] };
    doc.features.forEach((f, index) => out.set(index, f.properties?.[field]));
    return out;
  }
  const { body, delimiter, offset } = csvBody(text);
  const rows = Papa.parse<string[]>(body, { delimiter, skipEmptyLines: false }).data;
  const at = (rows[0] ?? []).map((h) => h.trim()).indexOf(field);
  rows.forEach((cells, t) => {
    if (t > 0) out.set(t + 1 + offset, cells[at]);
  });
  return out;
}

/** CSV text without its BOM and Excel "sep=" line, the delimiter, and the rows the sep line takes. */
function csvBody(text: string): { body: string; delimiter: string; offset: number } {
  let body = text.replace(/^\uFEFF/, '');
  const sep = excelSepLine(body);
  if (sep) body = body.slice(sep.length);
  body = oneKindOfLineBreak(body);
  return { body, delimiter: sep?.delimiter ?? detectDelimiter(body.split(/\r?\n|\r/, 1)[0] ?? ''), offset: sep ? 1 : 0 };
}

/** How zones are named in zone files: their number (1..K) or, for depot zones, the depot id. */
export interface ZoneNames {
  readonly count: number;
  /** Depot id of zone j (0-based), for the first zones. */
  readonly depotIds: readonly string[];
}

/** Zone index (0-based) of a label: a depot id, or a zone number 1..K; -1 when unknown. */
export function zoneIndex(label: string, names: ZoneNames): number {
  const s = label.trim();
  const byDepot = names.depotIds.indexOf(s);
  if (byDepot >= 0) return byDepot;
  if (/^\d+$/.test(s)) {
    const z = Number(s);
    if (z >= 1 && z <= names.count) return z - 1;
  }
  return -1;
}

function describeZones(names: ZoneNames): string {
  return names.depotIds.length > 0
    ? `a zone number 1..${names.count} or a depot id (${names.depotIds.slice(0, 5).join(', ')}${names.depotIds.length > 5 ? ', ...' : ''})`
    : `a zone number 1..${names.count}`;
}

interface Table {
  readonly header: string[];
  /** 1 when an Excel "sep=" line comes before the header. */
  readonly offset: number;
  readonly delimiter: string;
  readonly rows: { row: number; cells: string[] }[];
}

function readTable(file: string): Table {
  const { body, delimiter, offset } = csvBody(readText(file));
  if (body.trim() === '') throw fileError(file, 'empty-file', 'the file is empty');
  const parsed = Papa.parse<string[]>(body, { delimiter, skipEmptyLines: false });
  const [header, ...rest] = parsed.data;
  const rows: { row: number; cells: string[] }[] = [];
  rest.forEach((cells, t) => {
    if (cells.every((c) => c.trim() === '')) return;
    rows.push({ row: t + 2 + offset, cells });
  });
  const open = parsed.errors.find((e) => e.code === 'MissingQuotes');
  if (open) {
    const row = (open.row ?? 0) + 1 + offset;
    throw fileError(file, 'unclosed-quote', 'a double quote is never closed, so the rest of the file was read into one cell; close the quote or remove it', { row });
  }
  return { header: (header ?? []).map((h) => h.trim()), rows, offset, delimiter };
}

function column(table: Table, file: string, usual: readonly string[], what: string): number {
  const at = table.header.findIndex((h) => usual.includes(normaliseName(h)));
  if (at < 0) {
    throw fileError(file, 'header', `no ${what} column: name one ${usual.slice(0, 3).join(', ')}; the header has ${listColumns(table.header)}`, { row: 1 + table.offset });
  }
  return at;
}

/**
 * Reads locked stops: a CSV with a stop id column (stop_id, id, ...) and a zone column (zone
 * number or depot id). Returns, per stop of `stops`, the zone index it is locked to or -1.
 */
export function readLocksFile(file: string, stopIds: readonly string[], names: ZoneNames): Int32Array {
  const table = readTable(file);
  const idAt = column(table, file, ['stopid', 'id', 'stop', 'customerid', 'customer', 'siteid'], 'stop id');
  const zoneAt = column(table, file, ['zone', 'zoneid', 'territory', 'depot', 'van'], 'zone');
  const index = new Map<string, number>();
  stopIds.forEach((id, i) => index.set(id, i));
  const locked = new Int32Array(stopIds.length).fill(-1);
  const seenAt = new Map<string, number>();
  const log = new ProblemLog(file);
  for (const { row, cells } of table.rows) {
    const id = (cells[idAt] ?? '').trim();
    const zone = (cells[zoneAt] ?? '').trim();
    const i = index.get(id);
    if (id === '') log.error({ code: 'missing-id', row, field: table.header[idAt]!, message: 'stop id is empty' });
    else if (i === undefined) log.error({ code: 'unknown-stop', row, field: table.header[idAt]!, value: showValue(id), message: 'no stop has this id in the stops file' });
    else if (seenAt.has(id)) log.error({ code: 'duplicate-id', row, field: table.header[idAt]!, value: showValue(id), message: `this stop is locked twice: row ${seenAt.get(id)} locks it too` });
    const z = zoneIndex(zone, names);
    if (z < 0) log.error({ code: 'unknown-zone', row, field: table.header[zoneAt]!, value: showValue(zone), message: `the zone must be ${describeZones(names)}` });
    if (i !== undefined && z >= 0 && !seenAt.has(id)) locked[i] = z;
    if (id !== '') seenAt.set(id, row);
  }
  log.throwIfErrors();
  return locked;
}

/**
 * Reads capacities per zone: a CSV with a zone column (zone number or depot id) and a capacity
 * column. Returns capacity by zone index, null where the file names none.
 */
export function readCapacityFile(file: string, names: ZoneNames): (number | null)[] {
  const table = readTable(file);
  const zoneAt = column(table, file, ['zone', 'zoneid', 'territory', 'depot', 'van'], 'zone');
  const capAt = column(table, file, CAPACITY_NAMES, 'capacity');
  const out: (number | null)[] = new Array(names.count).fill(null);
  const seenAt = new Map<number, number>();
  const log = new ProblemLog(file);
  for (const { row, cells } of table.rows) {
    const zone = (cells[zoneAt] ?? '').trim();
    const z = zoneIndex(zone, names);
    const cell = readNumber(cells[capAt], table.delimiter !== ',');
    if (z < 0) log.error({ code: 'unknown-zone', row, field: table.header[zoneAt]!, value: showValue(zone), message: `the zone must be ${describeZones(names)}` });
    else if (seenAt.has(z)) log.error({ code: 'duplicate-zone', row, field: table.header[zoneAt]!, value: showValue(zone), message: `this zone already has a capacity in row ${seenAt.get(z)}` });
    if (!cell.ok) log.error({ code: 'bad-capacity', row, field: table.header[capAt]!, value: showValue(cells[capAt] ?? ''), message: cell.reason === 'empty' ? 'capacity is empty' : 'capacity must be a finite number' });
    else if (cell.value < 0) log.error({ code: 'bad-capacity', row, field: table.header[capAt]!, value: showValue(cells[capAt] ?? ''), message: 'capacity must not be negative' });
    if (z >= 0 && cell.ok && cell.value >= 0 && !seenAt.has(z)) out[z] = cell.value;
    if (z >= 0) seenAt.set(z, row);
  }
  log.throwIfErrors();
  return out;
}

/**
 * Reads a service area: a GeoJSON Polygon or MultiPolygon (bare, as a Feature, or every polygon
 * feature of a FeatureCollection together), [longitude, latitude] per RFC 7946.
 */
export function readServiceAreaFile(file: string): Polygon | MultiPolygon {
  const text = readText(file).replace(/^\uFEFF/, '');
  let doc: unknown;
  try {
    doc = JSON.parse(text);
  } catch (e) {
    throw fileError(file, 'invalid-json', describeJsonError(text, e));
  }
  const polys: Position[][][] = [];
  const log = new ProblemLog(file);
  const take = (g: unknown, feature?: number): void => {
    const where = feature === undefined ? {} : { feature };
    if (!g || typeof g !== 'object') {
      log.error({ code: 'not-polygon', ...where, field: 'geometry', message: 'a service area needs a Polygon or MultiPolygon geometry' });
      return;
    }
    const geom = g as { type?: unknown; coordinates?: unknown };
    const trace = polygonTrace(geom);
    if (Array.isArray(trace) && trace.length > 0) {
      // geojson-validation lists every broken ring and position: the first few say enough.
      const shown = `${trace.slice(0, 3).join('; ')}${trace.length > 3 ? `; ... (${trace.length} problems)` : ''}`;
      log.error({ code: 'not-polygon', ...where, field: 'geometry', value: showValue(geom.type ?? null), message: `a service area needs a valid Polygon or MultiPolygon: ${shown.length > 600 ? `${shown.slice(0, 597)}...` : shown}` });
      return;
    }
    const multi = geom.type === 'MultiPolygon';
    const list = multi ? (geom.coordinates as Position[][][]) : [geom.coordinates as Position[][]];
    for (let q = 0; q < list.length; q++) {
      const rings = list[q]!;
      for (let r = 0; r < rings.length; r++) {
        const ring = rings[r]!;
        for (let v = 0; v < ring.length; v++) {
          const p = ring[v]!;
          if (!(Math.abs(p[0]!) <= 180 && Math.abs(p[1]!) <= 90)) {
            // The field is the position's exact path, so that a lone geometry (no feature index) is still placed.
            const path = `geometry.coordinates${multi ? `[${q}]` : ''}[${r}][${v}]`;
            log.error({ code: 'bad-coordinate', ...where, field: path, value: showValue(p), message: 'positions must be [longitude -180..180, latitude -90..90]' });
            return;
          }
        }
      }
      polys.push(rings);
    }
  };
  const d = doc as { type?: unknown; features?: unknown[]; geometry?: unknown };
  if (d?.type === 'FeatureCollection' && Array.isArray(d.features)) d.features.forEach((f, t) => take((f as { geometry?: unknown })?.geometry, t));
  else if (d?.type === 'Feature') take(d.geometry);
  else take(doc);
  if (polys.length === 0 && log.ok) log.error({ code: 'not-polygon', message: 'the file holds no polygon' });
  log.throwIfErrors();
  return polys.length === 1 ? { type: 'Polygon', coordinates: polys[0]! } : { type: 'MultiPolygon', coordinates: polys };
}

/**
 * geojson-validation's reasons a Polygon or MultiPolygon is invalid. It recurses into the
 * coordinates, so arrays nested far deeper than a MultiPolygon's four levels are refused first
 * (thousands of levels would overflow the stack).
 */
function polygonTrace(geom: { type?: unknown; coordinates?: unknown }): string[] {
  if (geom.type !== 'Polygon' && geom.type !== 'MultiPolygon') return ['not a Polygon or MultiPolygon'];
  if (nestingDepth(geom.coordinates, 16) > (geom.type === 'Polygon' ? 3 : 4)) return ['the coordinates are nested too deeply'];
  try {
    const t = geom.type === 'Polygon' ? GJV.isPolygon(geom, true) : GJV.isMultiPolygon(geom, true);
    return Array.isArray(t) ? t : t ? [] : ['invalid'];
  } catch (e) {
    return [`invalid (${e instanceof Error ? e.message : String(e)})`];
  }
}
