/**
 * The bad-input, warning and good-input corpus under test/fixtures, read through readStopsFile.
 * Each bad file must stop the import with an ImportError whose problems name the file, the row
 * (CSV, counted as a spreadsheet does: header = row 1) or feature index (GeoJSON, 0-based), the
 * field and the value, and nothing may be written. Each warning file must import with its
 * warning. Each good file must give exactly the ids, positions and demands it holds.
 */
import { existsSync, mkdtempSync, readdirSync, readFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { afterAll, describe, expect, it } from 'vitest';
import { readStopsFile, type ReadStopsOptions } from '../../src/io/read.js';
import { ImportError, formatProblem, type Problem } from '../../src/io/problems.js';
import { planStopsFile } from '../../src/api/plan-file.js';

const FIXTURES = fileURLToPath(new URL('../fixtures/', import.meta.url));
const fixture = (dir: string, name: string): string => path.join(FIXTURES, dir, name);

/** Where a problem points: a CSV row, a GeoJSON feature index, or the file as a whole. */
type Where = { row: number } | { feature: number } | 'file';

interface BadCase {
  readonly file: string;
  /** The first problem reported. */
  readonly code: string;
  readonly where: Where;
  readonly field?: string;
  readonly value?: string;
  readonly message: RegExp;
  /** Codes of all problems, in order, when there is more than the first. */
  readonly codes?: readonly string[];
  readonly options?: ReadStopsOptions;
}

const row = (n: number): Where => ({ row: n });
const feature = (n: number): Where => ({ feature: n });

const BAD: readonly BadCase[] = [
  // --- CSV: coordinates ---
  { file: 'csv-lat-missing.csv', code: 'missing-coordinate', where: row(3), field: 'lat', value: '', message: /latitude is missing/ },
  { file: 'csv-lon-missing-cell.csv', code: 'missing-field', where: row(3), field: 'lon', message: /the row has 2 cells and no longitude/ },
  { file: 'csv-lat-not-number.csv', code: 'bad-coordinate', where: row(4), field: 'lat', value: '48.85.30', message: /latitude is not a number$/ },
  { file: 'csv-lat-dms.csv', code: 'bad-coordinate', where: row(3), field: 'lat', value: '48°51′30″N', message: /degrees-minutes-seconds must be written as decimal degrees/ },
  // RFC 4180 section 2.6: the quotes keep "2,2945" one field; in a comma file it is not a number.
  { file: 'csv-lon-decimal-comma.csv', code: 'bad-coordinate', where: row(3), field: 'lon', value: '2,2945', message: /longitude is not a number/ },
  { file: 'csv-lat-range.csv', code: 'lat-range', where: row(3), field: 'lat', value: '91.5', message: /latitude must be between -90 and 90/ },
  { file: 'csv-lon-range.csv', code: 'lon-range', where: row(4), field: 'lon', value: '-180.5', message: /longitude must be between -180 and 180/ },
  {
    file: 'csv-lat-range-swapped.csv',
    code: 'lat-range',
    where: row(2),
    field: 'lat',
    value: '151.2093',
    message: /between -90 and 90/,
    codes: ['lat-range', 'lat-range', 'lat-range'],
  },
  { file: 'csv-lat-range-semicolon.csv', code: 'lat-range', where: row(3), field: 'lat', value: '95,5', message: /between -90 and 90/ },
  { file: 'csv-lat-not-finite.csv', code: 'bad-coordinate', where: row(3), field: 'lat', value: '1e999', message: /latitude must be a finite number/ },
  { file: 'csv-lon-nan.csv', code: 'bad-coordinate', where: row(3), field: 'lon', value: 'NaN', message: /longitude must be a finite number/ },
  // Spreadsheet row numbers: a quoted line break (RFC 4180 section 2.6) stays inside its row;
  // an empty line is a row of its own.
  { file: 'csv-lat-range-after-multiline.csv', code: 'lat-range', where: row(3), field: 'lat', value: '95', message: /between -90 and 90/ },
  { file: 'csv-lat-range-after-blank.csv', code: 'lat-range', where: row(4), field: 'lat', value: '-95', message: /between -90 and 90/ },
  { file: 'txt-utf16le-lat-range.txt', code: 'lat-range', where: row(3), field: 'lat', value: '-91', message: /between -90 and 90/ },
  // --- CSV: demand ---
  { file: 'csv-demand-not-number.csv', code: 'bad-demand', where: row(3), field: 'demand', value: 'two', message: /demand is not a number/ },
  { file: 'csv-demand-empty.csv', code: 'bad-demand', where: row(4), field: 'demand', value: '', message: /demand is empty: write 0/ },
  { file: 'csv-demand-negative.csv', code: 'negative-demand', where: row(3), field: 'weight', value: '-2', message: /demand must not be negative/ },
  { file: 'csv-demand-not-finite.csv', code: 'bad-demand', where: row(2), field: 'demand', value: 'inf', message: /demand must be a finite number/ },
  {
    file: 'csv-several-problems.csv',
    code: 'missing-coordinate',
    where: row(3),
    field: 'lat',
    value: '',
    message: /latitude is missing/,
    codes: ['missing-coordinate', 'bad-coordinate', 'negative-demand'],
  },
  // --- CSV: ids ---
  { file: 'csv-duplicate-id.csv', code: 'duplicate-id', where: row(5), field: 'stop_id', value: 'P2', message: /id "P2" is used twice: row 3 has it too/ },
  { file: 'csv-missing-id.csv', code: 'missing-id', where: row(3), field: 'id', message: /id is empty/ },
  // --- CSV: the file as a whole ---
  { file: 'csv-empty.csv', code: 'empty-file', where: 'file', message: /the file is empty/ },
  { file: 'csv-blank.csv', code: 'empty-file', where: 'file', message: /the file is empty/ },
  { file: 'csv-bom-only.csv', code: 'empty-file', where: 'file', message: /the file is empty/ },
  { file: 'csv-header-only.csv', code: 'no-stops', where: 'file', message: /a header but no stop rows/ },
  {
    file: 'csv-no-header.csv',
    code: 'header',
    where: row(1),
    message: /no latitude column: .*the header has "P1", "48\.8566", "2\.3522"/,
    codes: ['header', 'header'],
  },
  {
    file: 'csv-header-unknown-names.csv',
    code: 'header',
    where: row(1),
    message: /no latitude column: .*--lat; the header has "stop", "north", "east"$/,
    codes: ['header', 'header'],
  },
  {
    file: 'csv-pipe-delimited.csv',
    code: 'header',
    where: row(1),
    message: /the header has "id\|lat\|lon" \(only one column was found with the comma delimiter/,
    codes: ['header', 'header'],
  },
  {
    file: 'csv-lat-override-missing.csv',
    code: 'header',
    where: row(1),
    field: 'Breite',
    message: /the latitude column "Breite" was asked for but the header has only "id", "lat", "lon"/,
    options: { lat: 'Breite' },
  },
  // --- GeoJSON: geometry (RFC 7946 section 3.1.2: a Point's coordinates are one position) ---
  { file: 'gj-not-point.geojson', code: 'not-point', where: feature(1), field: 'geometry.type', value: 'LineString', message: /geometry must be a Point$/ },
  { file: 'gj-multipoint.geojson', code: 'not-point', where: feature(0), field: 'geometry.type', value: 'MultiPoint', message: /split a MultiPoint into one Point feature per stop/ },
  { file: 'gj-no-geometry.geojson', code: 'no-geometry', where: feature(2), field: 'geometry', value: 'null', message: /the feature has no geometry/ },
  { file: 'gj-coordinates-missing.geojson', code: 'bad-coordinate', where: feature(1), field: 'geometry.coordinates', value: 'null', message: /coordinates must be \[longitude, latitude\]/ },
  // RFC 7946 section 3.1.1: a position has two or more elements.
  { file: 'gj-coordinates-short.geojson', code: 'bad-coordinate', where: feature(2), field: 'geometry.coordinates', value: '[2.3499]', message: /at least two elements/ },
  // RFC 7946 section 3.1.1: the elements are numbers; a numeric string is not one.
  { file: 'gj-lon-string.geojson', code: 'bad-coordinate', where: feature(1), field: 'geometry.coordinates[0]', value: '2.2945', message: /longitude must be a finite number/ },
  { file: 'gj-lat-null.geojson', code: 'bad-coordinate', where: feature(1), field: 'geometry.coordinates[1]', value: 'null', message: /latitude must be a finite number/ },
  { file: 'gj-lat-range.geojson', code: 'lat-range', where: feature(2), field: 'geometry.coordinates[1]', value: '91', message: /latitude must be between -90 and 90/ },
  { file: 'gj-lon-range.geojson', code: 'lon-range', where: feature(0), field: 'geometry.coordinates[0]', value: '200.5', message: /longitude must be between -180 and 180/ },
  // RFC 7946 section 3.1.1: longitude first. Sydney written [lat, lon] puts 151 in the latitude.
  {
    file: 'gj-lat-lon-order.geojson',
    code: 'lat-range',
    where: feature(0),
    field: 'geometry.coordinates[1]',
    value: '151.2093',
    message: /GeoJSON order is \[longitude, latitude\]/,
    codes: ['lat-range', 'lat-range'],
  },
  // RFC 8259 section 6 allows 1e999 as a number; it is beyond a double and reads as Infinity.
  { file: 'gj-coordinate-overflow.geojson', code: 'bad-coordinate', where: feature(1), field: 'geometry.coordinates[0]', value: 'Infinity', message: /longitude must be a finite number/ },
  // --- GeoJSON: demand ---
  { file: 'gj-demand-not-number.geojson', code: 'bad-demand', where: feature(1), field: 'properties.demand', value: 'two', message: /demand is not a number/ },
  { file: 'gj-demand-negative.geojson', code: 'negative-demand', where: feature(2), field: 'properties.demand', value: '-1', message: /demand must not be negative/ },
  { file: 'gj-demand-overflow.geojson', code: 'bad-demand', where: feature(0), field: 'properties.demand', value: 'Infinity', message: /demand must be a finite number/ },
  { file: 'gj-demand-null.geojson', code: 'bad-demand', where: feature(1), field: 'properties.weight', value: 'null', message: /demand is missing/ },
  {
    file: 'gj-several-problems.geojson',
    code: 'lon-range',
    where: feature(1),
    field: 'geometry.coordinates[0]',
    value: '200',
    message: /longitude must be between -180 and 180/,
    codes: ['lon-range', 'negative-demand'],
  },
  // --- GeoJSON: ids (RFC 7946 section 3.2: a feature's "id" member) ---
  { file: 'gj-duplicate-feature-id.geojson', code: 'duplicate-id', where: feature(2), field: 'id', value: 'P1', message: /id "P1" is used twice: feature 0 has it too/ },
  // The number 7 and the string "7" are the same stop id.
  { file: 'gj-duplicate-id-property.geojson', code: 'duplicate-id', where: feature(1), field: 'stop_id', value: '7', message: /id "7" is used twice: feature 0 has it too/ },
  { file: 'gj-missing-id.geojson', code: 'missing-id', where: feature(1), field: 'id', message: /id is empty/ },
  // --- GeoJSON: the file as a whole ---
  { file: 'gj-empty.geojson', code: 'empty-file', where: 'file', message: /the file is empty/ },
  { file: 'gj-invalid-json.geojson', code: 'invalid-json', where: 'file', message: /not valid JSON at line 3, column 1/ },
  // RFC 7946 section 3.3: a FeatureCollection holds the stops; a lone Feature or geometry does not.
  { file: 'gj-not-feature-collection.geojson', code: 'not-feature-collection', where: 'file', message: /type "Feature"; stops must come as a "FeatureCollection"/ },
  { file: 'gj-geometry-only.geojson', code: 'not-feature-collection', where: 'file', message: /type "Point"; stops must come as a "FeatureCollection"/ },
  { file: 'gj-no-features.geojson', code: 'no-stops', where: 'file', message: /has no features/ },
  { file: 'gj-feature-is-geometry.geojson', code: 'not-feature', where: feature(1), field: 'type', value: 'Point', message: /must be a Feature object/ },
  { file: 'gj-plan-without-stops.geojson', code: 'no-stops', where: 'file', message: /2 features but none with role "stop"/ },
];

interface WarnCase {
  readonly file: string;
  /** Codes of all warnings, in order. */
  readonly codes: readonly string[];
  /** The warning under test (the first of `codes`). */
  readonly where: Where | 'none';
  readonly field?: string;
  readonly count?: number;
  readonly message: RegExp;
  readonly ids: readonly string[];
}

const WARN: readonly WarnCase[] = [
  { file: 'csv-zero-zero.csv', codes: ['zero-zero'], where: row(4), count: 1, message: /1 stop at longitude 0, latitude 0 \(row 4\)/, ids: ['P1', 'P2', 'P3', 'P4'] },
  { file: 'gj-zero-zero.geojson', codes: ['zero-zero'], where: feature(2), count: 1, message: /\(feature 2\)/, ids: ['P1', 'P2', 'P3', 'P4'] },
  { file: 'csv-swapped.csv', codes: ['swapped-columns'], where: 'none', field: 'lat/lon', message: /of 4 stops checked, 0 lie on land as read and 4 would/, ids: ['P1', 'P2', 'P3', 'P4'] },
  // RFC 7946 section 3.1.1: [longitude, latitude]; these are [latitude, longitude].
  {
    file: 'gj-swapped.geojson',
    codes: ['swapped-columns'],
    where: 'none',
    field: 'geometry.coordinates[1]/geometry.coordinates[0]',
    message: /of 5 stops checked, 0 lie on land as read and 5 would/,
    ids: ['P1', 'P2', 'P3', 'P4', 'P5'],
  },
  // 48.85660 and 48.8566 are the same number.
  { file: 'csv-duplicate-position.csv', codes: ['duplicate-position'], where: 'none', count: 1, message: /\(row 5 same as row 2\)/, ids: ['P1', 'P2', 'P3', 'P4'] },
  { file: 'gj-duplicate-position.geojson', codes: ['duplicate-position'], where: 'none', count: 1, message: /\(feature 2 same as feature 1\)/, ids: ['P1', 'P2', 'P3'] },
  { file: 'csv-zero-demand.csv', codes: ['zero-demand'], where: row(3), field: 'demand', count: 1, message: /1 stop has demand 0 \(row 3\)/, ids: ['P1', 'P2', 'P3'] },
  { file: 'gj-zero-demand.geojson', codes: ['zero-demand'], where: feature(2), field: 'properties.demand', count: 1, message: /\(feature 2\)/, ids: ['P1', 'P2', 'P3'] },
  { file: 'csv-empty-rows.csv', codes: ['empty-rows'], where: 'none', count: 2, message: /2 empty rows skipped/, ids: ['P1', 'P2', 'P3'] },
  // RFC 7946 section 4: no "crs" member; coordinates are WGS 84.
  { file: 'gj-crs.geojson', codes: ['crs'], where: 'none', field: 'crs', message: /"crs" member is ignored/, ids: ['P1', 'P2', 'P3'] },
];

interface GoodCase {
  readonly file: string;
  readonly options?: ReadStopsOptions;
  readonly format: 'csv' | 'geojson';
  readonly ids: readonly string[];
  /** [longitude, latitude] per stop. */
  readonly positions: readonly (readonly [number, number])[];
  readonly demand: readonly number[];
  readonly rows: readonly number[];
  readonly fields: { id: string | null; lat: string; lon: string; demand: string | null };
  readonly warnings: readonly string[];
  readonly warning?: RegExp;
}

const PARIS: readonly (readonly [number, number])[] = [
  [2.3522, 48.8566],
  [2.2945, 48.8584],
  [2.3499, 48.853],
];
const GJ_FIELDS = { lon: 'geometry.coordinates[0]', lat: 'geometry.coordinates[1]' } as const;

const GOOD: readonly GoodCase[] = [
  // Usual names, compared without case and spaces: "Stop ID", "Latitude", "Longitude", "Weight".
  {
    file: 'csv-comma.csv',
    format: 'csv',
    ids: ['P1', 'P2', 'P3'],
    positions: PARIS,
    demand: [1, 2.5, 0.25],
    rows: [2, 3, 4],
    fields: { id: 'Stop ID', lat: 'Latitude', lon: 'Longitude', demand: 'Weight' },
    warnings: [],
  },
  { file: 'csv-semicolon.csv', format: 'csv', ids: ['P1', 'P2', 'P3'], positions: PARIS, demand: [1, 2, 3], rows: [2, 3, 4], fields: { id: 'id', lat: 'lat', lon: 'lng', demand: 'demand' }, warnings: [] },
  {
    file: 'tsv-tab.tsv',
    format: 'csv',
    ids: ['P1', 'P2', 'P3'],
    positions: PARIS,
    demand: [4, 5, 6],
    rows: [2, 3, 4],
    fields: { id: 'id', lat: 'latitude', lon: 'long', demand: 'parcels' },
    warnings: [],
  },
  // The BOM (U+FEFF) must not stick to the first header name, or "id" would not be found.
  { file: 'csv-bom.csv', format: 'csv', ids: ['Zoë-1', 'Zoë-2', 'Zoë-3'], positions: PARIS, demand: [1, 2, 3], rows: [2, 3, 4], fields: { id: 'id', lat: 'lat', lon: 'lon', demand: 'demand' }, warnings: [] },
  // RFC 4180 section 2.1 (CRLF) and 2.6 (a CRLF inside quotes belongs to the field).
  { file: 'csv-crlf.csv', format: 'csv', ids: ['P1', 'P2', 'P3'], positions: PARIS, demand: [1, 1, 1], rows: [2, 3, 4], fields: { id: 'id', lat: 'lat', lon: 'lon', demand: null }, warnings: [] },
  // RFC 4180 sections 2.5-2.7: quoted fields, with commas, doubled quotes and a line break inside.
  { file: 'csv-quoted.csv', format: 'csv', ids: ['P1', 'P,2', 'P3'], positions: PARIS, demand: [1, 2, 3], rows: [2, 3, 4], fields: { id: 'id', lat: 'lat', lon: 'lon', demand: 'demand' }, warnings: [] },
  {
    file: 'csv-decimal-comma.csv',
    format: 'csv',
    ids: ['P1', 'P2', 'P3'],
    positions: PARIS,
    demand: [1.5, 2, 3],
    rows: [2, 3, 4],
    fields: { id: 'id', lat: 'lat', lon: 'lon', demand: 'demand' },
    warnings: ['decimal-comma'],
    warning: /^5 numbers written with a decimal comma .* the semicolon delimiter/,
  },
  // WHATWG Encoding: windows-1252, where 0x9c is œ and 0x80 is € (not the C1 controls of ISO-8859-1).
  {
    file: 'csv-latin1.csv',
    format: 'csv',
    ids: ['P1', 'Café', 'Bœuf à 5 €', 'Müller'],
    positions: [...PARIS, [2.3376, 48.8606]],
    demand: [1, 2, 3, 4],
    rows: [2, 3, 4, 5],
    fields: { id: 'id', lat: 'lat', lon: 'lon', demand: 'demand' },
    warnings: ['encoding'],
    warning: /not valid UTF-8 \(first at line 3\); it was read as Windows-1252/,
  },
  // UTF-16LE with BOM (Unicode Standard section 23.8 / RFC 2781), tab-separated, CRLF.
  {
    file: 'txt-utf16le.txt',
    format: 'csv',
    ids: ['Zürich', 'Łódź', '📦-3'],
    positions: [
      [8.5417, 47.3769],
      [19.456, 51.7592],
      [21.0122, 52.2297],
    ],
    demand: [1, 2, 3],
    rows: [2, 3, 4],
    fields: { id: 'id', lat: 'lat', lon: 'lon', demand: 'demand' },
    warnings: [],
  },
  // No id column: ids are the row numbers; no demand column: 1 per stop.
  { file: 'csv-no-id-no-demand.csv', format: 'csv', ids: ['2', '3', '4'], positions: PARIS, demand: [1, 1, 1], rows: [2, 3, 4], fields: { id: null, lat: 'LAT', lon: 'LON', demand: null }, warnings: [] },
  // Columns chosen by options win over the usual names ("name" would otherwise be the id).
  {
    file: 'csv-override.csv',
    options: { lat: 'Breite', lon: 'Länge', id: 'Kunde', demand: 'Pakete' },
    format: 'csv',
    ids: ['K-1', 'K-2', 'K-3'],
    positions: PARIS,
    demand: [3, 1, 2],
    rows: [2, 3, 4],
    fields: { id: 'Kunde', lat: 'Breite', lon: 'Länge', demand: 'Pakete' },
    warnings: [],
  },
  // The limits themselves are valid; "+0.5", "-.5" and "-1e2" are plain decimal notation. A stop
  // on the prime meridian or on the equator is not at (0, 0): no warning.
  {
    file: 'csv-bounds.csv',
    format: 'csv',
    ids: ['N', 'S', 'E', 'W', 'Greenwich', 'Equator'],
    positions: [
      [180, 90],
      [-180, -90],
      [179.999999, 0.5],
      [-100, -0.5],
      [0, 51.4779],
      [10.5, 0],
    ],
    demand: [1, 1, 1, 1, 1, 1],
    rows: [2, 3, 4, 5, 6, 7],
    fields: { id: 'id', lat: 'lat', lon: 'lon', demand: null },
    warnings: [],
  },
  // RFC 7946 section 3.2: the feature "id" member (string or number) is the id.
  {
    file: 'gj-feature-ids.geojson',
    format: 'geojson',
    ids: ['P1', '17', 'P3'],
    positions: PARIS,
    demand: [2, 2.5, 0.5],
    rows: [0, 1, 2],
    fields: { id: 'id', ...GJ_FIELDS, demand: 'properties.weight' },
    warnings: [],
  },
  {
    file: 'gj-id-property.geojson',
    format: 'geojson',
    ids: ['S-1', 'S-2', '3'],
    positions: PARIS,
    demand: [3, 1, 2],
    rows: [0, 1, 2],
    fields: { id: 'stop_id', ...GJ_FIELDS, demand: 'properties.parcels' },
    warnings: [],
  },
  { file: 'gj-no-ids.geojson', format: 'geojson', ids: ['0', '1', '2'], positions: PARIS, demand: [1, 1, 1], rows: [0, 1, 2], fields: { id: 'id', ...GJ_FIELDS, demand: null }, warnings: [] },
  // RFC 7946 section 3.1.1: a third element is an altitude; it is ignored.
  {
    file: 'gj-altitude.geojson',
    format: 'geojson',
    ids: ['P1', 'P2', 'P3'],
    positions: PARIS,
    demand: [1, 1, 1],
    rows: [0, 1, 2],
    fields: { id: 'id', ...GJ_FIELDS, demand: null },
    warnings: ['altitude'],
    warning: /^2 points have a third coordinate \(altitude\); it is ignored$/,
  },
  {
    file: 'gj-override.geojson',
    options: { id: 'Kunde', demand: 'Pakete' },
    format: 'geojson',
    ids: ['K-1', 'K-2', 'K-3'],
    positions: PARIS,
    demand: [3, 1, 2],
    rows: [0, 1, 2],
    fields: { id: 'Kunde', ...GJ_FIELDS, demand: 'properties.Pakete' },
    warnings: [],
  },
  // A plan written by Zoneplan: only role "stop" features are stops; centres and zone polygons are skipped.
  {
    file: 'gj-plan.geojson',
    format: 'geojson',
    ids: ['P1', 'P2', 'P3'],
    positions: PARIS,
    demand: [1, 2.5, 0.25],
    rows: [1, 2, 5],
    fields: { id: 'id', ...GJ_FIELDS, demand: 'properties.demand' },
    warnings: [],
  },
];

function importError(file: string, options?: ReadStopsOptions): ImportError {
  try {
    readStopsFile(file, options);
  } catch (e) {
    if (e instanceof ImportError) return e;
    throw new Error(`expected an ImportError for ${file}, got ${String(e)}`);
  }
  throw new Error(`expected an ImportError for ${file}, but it was imported`);
}

function expectWhere(p: Problem, where: Where | 'none'): void {
  if (where === 'file' || where === 'none') {
    expect(p.row).toBeUndefined();
    expect(p.feature).toBeUndefined();
  } else if ('row' in where) {
    expect(p.row).toBe(where.row);
    expect(p.feature).toBeUndefined();
  } else {
    expect(p.feature).toBe(where.feature);
    expect(p.row).toBeUndefined();
  }
}

const scratch = mkdtempSync(path.join(tmpdir(), 'zoneplan-corpus-'));
afterAll(() => rmSync(scratch, { recursive: true, force: true }));

describe('bad input: the import stops and says where', () => {
  it.each(BAD)('$file', async (c) => {
    const file = fixture('bad', c.file);
    const e = importError(file, c.options);
    expect(e.file).toBe(file);
    expect(e.problems.map((p) => p.code)).toEqual(c.codes ?? [c.code]);
    expect(e.errorCount).toBe(e.problems.length);
    for (const p of e.problems) {
      expect(p.severity).toBe('error');
      expect(p.file).toBe(file);
    }
    const p = e.problems[0]!;
    expect(p.code).toBe(c.code);
    expectWhere(p, c.where);
    expect(p.field).toBe(c.field);
    expect(p.value).toBe(c.value);
    expect(p.message).toMatch(c.message);

    // The text a planner reads names the file, the row or feature, the field and the value.
    const line = formatProblem(p);
    const place = c.where === 'file' ? '' : 'row' in c.where ? `row ${c.where.row}` : `feature ${c.where.feature}`;
    const named = [place, c.field !== undefined ? `field "${c.field}"` : '', c.value !== undefined ? `value "${c.value}"` : ''].filter((s) => s !== '').join(', ');
    expect(line).toBe(`error: ${file}${named ? `: ${named}` : ''}: ${p.message}`);
    expect(e.message.split('\n')).toContain(line);
    expect(e.message).not.toMatch(/^\s+at /m);

    // Nothing half-imported, nothing written: planning the file writes neither output.
    const dir = mkdtempSync(path.join(scratch, 'out-'));
    const geojson = path.join(dir, 'plan.geojson');
    const assignments = path.join(dir, 'assignments.csv');
    await expect(planStopsFile(file, c.options ?? {}, { zones: 2 }, { geojson, assignments })).rejects.toBeInstanceOf(ImportError);
    expect(existsSync(geojson)).toBe(false);
    expect(existsSync(assignments)).toBe(false);
    expect(readdirSync(dir)).toEqual([]);
  });
});

describe('warnings: the import goes on', () => {
  it.each(WARN)('$file', (c) => {
    const file = fixture('warn', c.file);
    const stops = readStopsFile(file);
    expect(stops.ids).toEqual(c.ids);
    expect(stops.warnings.map((w) => w.code)).toEqual(c.codes);
    const w = stops.warnings[0]!;
    expect(w.severity).toBe('warning');
    expect(w.file).toBe(file);
    expectWhere(w, c.where);
    expect(w.field).toBe(c.field);
    expect(w.count).toBe(c.count);
    expect(w.message).toMatch(c.message);
  });
});

describe('good input: exact values', () => {
  it.each(GOOD)('$file', (c) => {
    const file = fixture('good', c.file);
    const stops = readStopsFile(file, c.options);
    expect(stops.source).toBe(file);
    expect(stops.format).toBe(c.format);
    expect(stops.ids).toEqual(c.ids);
    expect(Array.from(stops.lonLat)).toEqual(c.positions.flat());
    expect(Array.from(stops.demand)).toEqual(c.demand);
    expect(Array.from(stops.rows)).toEqual(c.rows);
    expect(stops.units.length).toBe(3 * c.ids.length);
    expect(stops.fields).toEqual(c.fields);
    expect(stops.warnings.map((w) => w.code)).toEqual(c.warnings);
    if (c.warning) expect(stops.warnings[0]!.message).toMatch(c.warning);
  });
});

describe('the corpus is complete and documented', () => {
  const listed = (dir: string): string[] => readdirSync(path.join(FIXTURES, dir)).filter((f) => f !== 'README.md' && f !== '.gitattributes').sort();

  it.each([
    ['bad', BAD],
    ['warn', WARN],
    ['good', GOOD],
  ] as const)('every file in %s/ has a case and every case a file', (dir, cases) => {
    expect(cases.map((c) => c.file).sort()).toEqual(listed(dir));
  });

  it('covers every error and warning the issue lists', () => {
    const codes = new Set(BAD.flatMap((c) => c.codes ?? [c.code]));
    for (const code of ['missing-coordinate', 'bad-coordinate', 'lat-range', 'lon-range', 'bad-demand', 'negative-demand', 'duplicate-id', 'empty-file', 'header', 'not-point']) {
      expect(codes, code).toContain(code);
    }
    const warned = new Set(WARN.flatMap((c) => c.codes));
    for (const code of ['zero-zero', 'swapped-columns', 'duplicate-position', 'zero-demand']) expect(warned, code).toContain(code);
  });

  /** Rows of the README tables: | `file` | what is wrong | `code` | row 3 / feature 1 / - | `field` / - | */
  function readmeRows(dir: string): Map<string, { code: string; where: string; field: string }> {
    const out = new Map<string, { code: string; where: string; field: string }>();
    for (const line of readFileSync(path.join(FIXTURES, dir, 'README.md'), 'utf8').split('\n')) {
      const m = /^\|\s*`([^`]+)`\s*\|(?:\\\||[^|])*\|\s*`([^`]+)`\s*\|\s*([^|]*?)\s*\|\s*([^|]*?)\s*\|\s*$/.exec(line);
      if (m) out.set(m[1]!, { code: m[2]!, where: m[3]!, field: m[4]!.replace(/`/g, '') });
    }
    return out;
  }
  const whereText = (w: Where | 'none'): string => (w === 'file' || w === 'none' ? '-' : 'row' in w ? `row ${w.row}` : `feature ${w.feature}`);

  it('bad/README.md lists every bad file with its code, place and field', () => {
    const rows = readmeRows('bad');
    expect([...rows.keys()].sort()).toEqual(listed('bad'));
    for (const c of BAD) expect(rows.get(c.file), c.file).toEqual({ code: c.code, where: whereText(c.where), field: c.field ?? '-' });
  });

  it('good/README.md lists every good file', () => {
    const text = readFileSync(path.join(FIXTURES, 'good', 'README.md'), 'utf8');
    const named = [...text.matchAll(/^\|\s*`([^`]+)`\s*\|/gm)].map((m) => m[1]!);
    expect(named.sort()).toEqual(listed('good'));
  });

  it('warn/README.md lists every warning file with its code, place and field', () => {
    const rows = readmeRows('warn');
    expect([...rows.keys()].sort()).toEqual(listed('warn'));
    for (const c of WARN) expect(rows.get(c.file), c.file).toEqual({ code: c.codes[0], where: whereText(c.where), field: c.field ?? '-' });
  });
});
