/**
 * The reader fixes made for the hostile corpus, one by one, on the pure functions: each case
 * here failed (crashed, misread or gave a poor message) before its fix.
 */
import { describe, expect, it } from 'vitest';
import { decodeText, utf16WithoutBom } from '../../src/io/decode.js';
import { excelSepLine, listColumns, oneKindOfLineBreak, parseStopsCsv } from '../../src/io/csv.js';
import { describeJsonError, parseStopsGeoJson } from '../../src/io/geojson-stops.js';
import { ImportError, escapeControls, formatProblem, showValue } from '../../src/io/problems.js';
import { memoryShortfall, refuseBinary } from '../../src/io/read.js';

function importError(run: () => unknown): ImportError {
  try {
    run();
  } catch (e) {
    if (e instanceof ImportError) return e;
    throw e;
  }
  throw new Error('expected an ImportError');
}

describe('CSV', () => {
  it('a row with more cells than the header is an error, not shifted values (was: lat 52, lon 52 read silently)', () => {
    const e = importError(() => parseStopsCsv('id,lat,lon\nA,52,52,13,40\n', 'f.csv'));
    expect(e.problems.map((p) => [p.code, p.row, p.field, p.value])).toEqual([['extra-cells', 2, 'column 4', '13']]);
    // Empty extra cells are harmless.
    expect(parseStopsCsv('id,lat,lon\nA,52.5,13.4,,\n', 'f.csv').ids).toEqual(['A']);
  });

  it('an unclosed quote names its row and field (was: "latitude is not a number" with the rest of the file as the value)', () => {
    const e = importError(() => parseStopsCsv('id,lat,lon\nA,52.5,13.4\nB,"52.6,13.5\nC,52.7,13.6\n', 'f.csv'));
    expect(e.problems.map((p) => [p.code, p.row, p.field])).toEqual([['unclosed-quote', 3, 'lat']]);
  });

  it('Excel\'s "sep=;" line names the delimiter and is not the header', () => {
    expect(excelSepLine('sep=;\r\nid;lat')).toEqual({ length: 7, delimiter: ';' });
    expect(excelSepLine('id,sep=;\n')).toBeNull();
    const s = parseStopsCsv('sep=;\nid;lat;lon\nA;52,5;13,4\n', 'f.csv');
    expect(Array.from(s.lonLat)).toEqual([13.4, 52.5]);
    expect(s.rows[0]).toBe(3);
  });

  it('mixed line breaks are made one kind (was: rows run together into cells)', () => {
    expect(oneKindOfLineBreak('a\r\nb\nc\rd')).toBe('a\nb\nc\nd');
    expect(oneKindOfLineBreak('a\r\nb\r\n')).toBe('a\r\nb\r\n');
    expect(parseStopsCsv('id,lat,lon\r\nA,52.5,13.4\nB,52.6,13.5\r\n', 'f.csv').ids).toEqual(['A', 'B']);
  });

  it('header lists in messages are escaped and cut to 12 columns (was: a megabyte message, raw control characters)', () => {
    expect(listColumns(['a\u001b[2J', 'b'])).toBe('"a\\u001b[2J", "b"');
    expect(listColumns(Array.from({ length: 1000 }, (_, i) => `c${i}`))).toMatch(/"c11", \.\.\. \(1000 columns\)$/);
  });

  it('ids over 1000 characters are refused', () => {
    const e = importError(() => parseStopsCsv(`id,lat,lon\n${'x'.repeat(1001)},52.5,13.4\n`, 'f.csv'));
    expect([e.problems[0]!.code, e.problems[0]!.row, e.problems[0]!.field]).toEqual(['long-id', 2, 'id']);
  });

  it('formula-like ids are kept and warned about; numbers with a sign are not', () => {
    const s = parseStopsCsv('id,lat,lon\n=1+1,52.5,13.4\n-12,52.6,13.5\n+49 30 1234,52.7,13.6\n', 'f.csv');
    expect(s.ids).toEqual(['=1+1', '-12', '+49 30 1234']);
    const w = s.warnings.find((x) => x.code === 'formula-like-id');
    expect([w?.count, w?.row]).toEqual([1, 2]);
  });
});

describe('encodings and binary files', () => {
  it('UTF-16 without a byte order mark is recognised; UTF-8 and Latin-1 text is not taken for it', () => {
    expect(utf16WithoutBom(Buffer.from('id,lat,lon\n1,2,3\n', 'utf16le'))).toBe('utf-16le');
    const be = Buffer.from('id,lat,lon\n1,2,3\n', 'utf16le').swap16();
    expect(utf16WithoutBom(be)).toBe('utf-16be');
    expect(decodeText(be).text).toBe('id,lat,lon\n1,2,3\n');
    expect(utf16WithoutBom(Buffer.from('id,lat,lon\nMüller,2,3\n', 'utf8'))).toBeNull();
    expect(utf16WithoutBom(Buffer.from('id,lat,lon\nM\u00fcller,2,3\n', 'latin1'))).toBeNull();
    expect(utf16WithoutBom(Buffer.from('ab'))).toBeNull();
  });

  it('binary files are refused by magic number or control characters; a stray escape is not binary', () => {
    const zip = Buffer.from([0x50, 0x4b, 0x03, 0x04, 1, 2, 3]);
    expect(importError(() => refuseBinary('z.csv', zip, zip.toString('latin1'))).problems[0]!.message).toMatch(/ZIP archive/);
    const nul = 'id,lat\n1,\u00002\n';
    expect(importError(() => refuseBinary('n.csv', Buffer.from(nul), nul)).problems[0]!.row).toBe(2);
    const esc = 'id,lat,lon\n\u001b[2J,52.5,13.4\n';
    expect(() => refuseBinary('e.csv', Buffer.from(esc), esc)).not.toThrow();
  });

  it('messages escape control and bidi characters (terminal escape sequences, RTL overrides)', () => {
    expect(escapeControls('a\u001b[31mb\u202ec')).toBe('a\\u001b[31mb\\u202ec');
    const line = formatProblem({ severity: 'error', code: 'x', file: 'f.csv', row: 2, field: 'la\u001bt', value: showValue('v\u0007'), message: 'id "\u001b[2J" twice' });
    expect(line).toBe('error: f.csv: row 2, field "la\\u001bt", value "v\\u0007": id "\\u001b[2J" twice');
  });
});

describe('JSON', () => {
  it('syntax errors name line and column also where V8 gives no position, without quoting the file', () => {
    const at = (t: string): string => {
      try {
        JSON.parse(t);
      } catch (e) {
        return describeJsonError(t, e);
      }
      return '';
    };
    expect(at('{"a":[1,\n2,\n]}')).toBe('the file is not valid JSON at line 3, column 1: unexpected "]"');
    expect(at('[NaN]')).toMatch(/line 1, column 2: unexpected "N" \(NaN and Infinity are not JSON numbers\)/);
    expect(at('{"a":1')).toMatch(/^the file is not valid JSON at line 1, column 7: /);
  });

  it('coordinates nested 100 000 deep are an error, not a stack overflow (was: "Maximum call stack size exceeded", exit 1)', () => {
    const deep = `${'['.repeat(100_000)}${']'.repeat(100_000)}`;
    const text = `{"type":"FeatureCollection","features":[{"type":"Feature","properties":{},"geometry":{"type":"Point","coordinates":${deep}}}]}`;
    const e = importError(() => parseStopsGeoJson(text, 'd.geojson'));
    expect([e.problems[0]!.code, e.problems[0]!.feature, e.problems[0]!.field, e.problems[0]!.value]).toEqual(['bad-coordinate', 0, 'geometry.coordinates', '[...]']);
  });
});

describe('memory', () => {
  it('a file that would exhaust the heap is refused with a message before it is read', () => {
    const heap = { heap_size_limit: 560 * 2 ** 20, used_heap_size: 11 * 2 ** 20 } as ReturnType<typeof import('node:v8').getHeapStatistics>;
    // The measured case: 145 MB of CSV does not fit a 512 MB heap (V8 aborted before this check).
    expect(memoryShortfall(145 * 2 ** 20, 'csv', heap)).toMatch(/the file is 145 MB; reading it needs about 653 MB of memory, and this Zoneplan may use 549 MB more .*--max-old-space-size=1024/);
    expect(memoryShortfall(50 * 2 ** 20, 'csv', heap)).toBeNull();
    expect(memoryShortfall(50 * 2 ** 20, 'geojson', heap)).toMatch(/needs about 600 MB/);
  });
});
