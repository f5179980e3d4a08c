import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { detectDelimiter, parseStopsCsv, type CsvOptions } from '../../src/io/csv.js';
import { ImportError } from '../../src/io/problems.js';

function importError(text: string, options?: CsvOptions): ImportError {
  try {
    parseStopsCsv(text, 'stops.csv', options);
  } catch (e) {
    if (e instanceof ImportError) return e;
    throw e;
  }
  throw new Error('expected an ImportError');
}

describe('detectDelimiter', () => {
  it.each([
    ['id,lat,lon', ','],
    ['id;lat;lon', ';'],
    ['id\tlat\tlon', '\t'],
    ['lat', ','], // nothing to go by: comma
    ['', ','],
    // RFC 4180 section 2.6: delimiters inside double quotes do not count ...
    ['"Name, first";lat;lon', ';'],
    ['"a;b;c;d",lat,lon', ','],
    // ... and a doubled quote inside quotes (section 2.7) does not end the quoted part.
    ['"say ""hi"", ok";lat', ';'],
    // Most frequent wins, comma on a tie.
    ['Name, with comma;lat;lon', ';'],
    ['a;b,c', ','],
    ['a\tb,c', ','],
    ['a;b;c\td\te\tf', '\t'],
  ] as const)('%j gives %j', (header, expected) => {
    expect(detectDelimiter(header)).toBe(expected);
  });

  it('finds the delimiter that joins any header of plain names', () => {
    const name = fc.stringMatching(/^[A-Za-z_ ()-]{1,12}$/);
    fc.assert(
      fc.property(fc.array(name, { minLength: 2, maxLength: 8 }), fc.constantFrom(',', ';', '\t'), (names, d) => {
        expect(detectDelimiter(names.join(d))).toBe(d);
      }),
      { numRuns: 2000 },
    );
  });
});

describe('parseStopsCsv: columns by their usual names', () => {
  it.each([
    ['lat,lon', { lat: 'lat', lon: 'lon', id: null, demand: null }],
    ['Latitude,Longitude', { lat: 'Latitude', lon: 'Longitude', id: null, demand: null }],
    ['LAT;LNG', { lat: 'LAT', lon: 'LNG', id: null, demand: null }],
    ['lat,long', { lat: 'lat', lon: 'long', id: null, demand: null }],
    ['y,x', { lat: 'y', lon: 'x', id: null, demand: null }],
    ['Lat (WGS84),Lon (WGS84)', { lat: 'Lat (WGS84)', lon: 'Lon (WGS84)', id: null, demand: null }],
    ['latitude_deg,longitude-deg', { lat: 'latitude_deg', lon: 'longitude-deg', id: null, demand: null }],
    // GTFS stops.txt names.
    ['stop_id,stop_lat,stop_lon', { lat: 'stop_lat', lon: 'stop_lon', id: 'stop_id', demand: null }],
    ['Stop ID,lat,lon,Weight', { lat: 'lat', lon: 'lon', id: 'Stop ID', demand: 'Weight' }],
    ['customer_id,lat,lon,Quantity', { lat: 'lat', lon: 'lon', id: 'customer_id', demand: 'Quantity' }],
    ['site,lat,lon,service_minutes', { lat: 'lat', lon: 'lon', id: 'site', demand: 'service_minutes' }],
    ['name,lat,lon,parcels', { lat: 'lat', lon: 'lon', id: 'name', demand: 'parcels' }],
    ['ref,lat,lon,Visits', { lat: 'lat', lon: 'lon', id: 'ref', demand: 'Visits' }],
    [' id , lat , lon , demand ', { lat: 'lat', lon: 'lon', id: 'id', demand: 'demand' }],
    // Order of preference when several usual names are present.
    ['name,id,x,lon,y,lat,count,demand', { lat: 'lat', lon: 'lon', id: 'id', demand: 'demand' }],
  ] as const)('%j', (header, fields) => {
    const cells = header.split(/[,;]/).length;
    const d = header.includes(';') ? ';' : ',';
    // A row with a numeric cell for every column: only the chosen ones matter.
    const row = Array.from({ length: cells }, (_, i) => String(i === 0 ? 7 : 40 + i)).join(d);
    const stops = parseStopsCsv(`${header}\n${row}\n`, 'stops.csv');
    expect(stops.fields).toEqual(fields);
  });

  it('reads the chosen columns: lat, lon, id and demand by position of the name', () => {
    const stops = parseStopsCsv('demand,lon,id,lat\n2,2.3522,P1,48.8566\n0.5,2.2945,P2,48.8584\n', 'stops.csv');
    expect(stops.ids).toEqual(['P1', 'P2']);
    expect(Array.from(stops.lonLat)).toEqual([2.3522, 48.8566, 2.2945, 48.8584]);
    expect(Array.from(stops.demand)).toEqual([2, 0.5]);
  });

  it('numbers stops by row and gives demand 1 without id and demand columns', () => {
    const stops = parseStopsCsv('lat,lon\n48.8566,2.3522\n\n48.8584,2.2945\n', 'stops.csv');
    expect(stops.ids).toEqual(['2', '4']);
    expect(Array.from(stops.demand)).toEqual([1, 1]);
  });

  it('strips a BOM left on the text', () => {
    const stops = parseStopsCsv('\uFEFFid,lat,lon\nP1,48.8566,2.3522\n', 'stops.csv');
    expect(stops.fields.id).toBe('id');
    expect(stops.ids).toEqual(['P1']);
  });
});

describe('parseStopsCsv: options', () => {
  const text = 'Kunde;Breite;Länge;Pakete;id;lat;lon;demand\nK-1;48,8566;2,3522;3;x;1;2;9\n';

  it('uses the columns named in the options over the usual names', () => {
    const stops = parseStopsCsv(text, 'stops.csv', { id: 'Kunde', lat: 'Breite', lon: 'Länge', demand: 'Pakete' });
    expect(stops.fields).toEqual({ id: 'Kunde', lat: 'Breite', lon: 'Länge', demand: 'Pakete' });
    expect(stops.ids).toEqual(['K-1']);
    expect(Array.from(stops.lonLat)).toEqual([2.3522, 48.8566]);
    expect(Array.from(stops.demand)).toEqual([3]);
  });

  it('matches an option name without case, spaces or underscores', () => {
    const stops = parseStopsCsv(text, 'stops.csv', { id: 'KUNDE', lat: ' breite', lon: 'länge', demand: 'pa_kete' });
    expect(stops.fields).toEqual({ id: 'Kunde', lat: 'Breite', lon: 'Länge', demand: 'Pakete' });
  });

  it('reports every option naming a column the header lacks, with the name as the field', () => {
    const e = importError('id,lat,lon\nP1,48.8566,2.3522\n', { id: 'Kunde', demand: 'Pakete' });
    expect(e.problems.map((p) => [p.code, p.row, p.field])).toEqual([
      ['header', 1, 'Kunde'],
      ['header', 1, 'Pakete'],
    ]);
    expect(e.problems[0]!.message).toBe('the id column "Kunde" was asked for but the header has only "id", "lat", "lon"');
  });

  it('takes the delimiter from the options instead of detecting it', () => {
    // The header alone would say comma (two commas, one semicolon).
    const body = 'name, first, last;lat;lon\nA, B, C;48,8566;2,3522\n';
    expect(detectDelimiter(body.split('\n')[0]!)).toBe(',');
    const stops = parseStopsCsv(body, 'stops.csv', { delimiter: ';' });
    expect(stops.ids).toEqual(['2']);
    expect(Array.from(stops.lonLat)).toEqual([2.3522, 48.8566]);
    // A wrong delimiter leaves one column and says so.
    const e = importError('id;lat;lon\nP1;48.8566;2.3522\n', { delimiter: '\t' });
    expect(e.problems[0]!.message).toMatch(/only one column was found with the tab delimiter/);
  });

  it('does not read decimal commas in a comma-separated file', () => {
    // Unquoted, "48,8566" is two cells (RFC 4180 section 2.4); the row then has more cells than
    // the header, which is reported as such (its values are shifted, so they are not checked).
    const e = importError('lat,lon\n48,8566,2,3522\n');
    expect(e.problems.map((p) => [p.code, p.row, p.field, p.value])).toEqual([['extra-cells', 2, 'column 3', '2']]);
    expect(e.problems[0]!.message).toMatch(/decimal comma/);
  });
});

describe('parseStopsCsv: many bad rows', () => {
  it('keeps the first 200 problems in full and counts the rest', () => {
    const rows = Array.from({ length: 250 }, (_, i) => `P${i},95,2.35`);
    const e = importError(`id,lat,lon\n${rows.join('\n')}\n`);
    expect(e.errorCount).toBe(250);
    expect(e.problems).toHaveLength(200);
    expect(e.problems[0]!.row).toBe(2);
    expect(e.problems[199]!.row).toBe(201);
    const lines = e.message.split('\n');
    expect(lines[0]).toBe('stops.csv: 250 errors, nothing imported');
    expect(lines).toHaveLength(22);
    expect(lines[21]).toBe('... and 230 more errors');
  });
});
