import { copyFileSync, mkdirSync, mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { afterAll, describe, expect, it } from 'vitest';
import { formatOf, readStopsFile, type ReadStopsOptions } from '../../src/io/read.js';
import { ImportError } from '../../src/io/problems.js';

const GOOD = fileURLToPath(new URL('../fixtures/good/', import.meta.url));
const dir = mkdtempSync(path.join(tmpdir(), 'zoneplan-read-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));

function importError(file: string, options?: ReadStopsOptions): ImportError {
  try {
    readStopsFile(file, options);
  } catch (e) {
    if (e instanceof ImportError) return e;
    throw new Error(`expected an ImportError, got ${String(e)}`);
  }
  throw new Error('expected an ImportError, but the file was imported');
}

describe('readStopsFile: the file itself', () => {
  it('a missing file is an ImportError, not an ENOENT stack trace', () => {
    const file = path.join(dir, 'no-such-stops.csv');
    const e = importError(file);
    expect(e.problems).toEqual([{ severity: 'error', file, code: 'unreadable', message: 'no such file' }]);
    expect(e.message).toBe(`${file}: 1 error, nothing imported\nerror: ${file}: no such file`);
  });

  it('a folder is an ImportError', () => {
    const folder = path.join(dir, 'stops.csv');
    mkdirSync(folder);
    const e = importError(folder);
    expect(e.problems.map((p) => [p.code, p.message])).toEqual([['not-a-file', 'this is a folder, not a stops file']]);
  });
});

describe('readStopsFile: the format', () => {
  it.each([
    ['stops.csv', 'csv'],
    ['stops.TSV', 'csv'],
    ['stops.txt', 'csv'],
    ['stops.geojson', 'geojson'],
    ['stops.JSON', 'geojson'],
  ] as const)('%s is read as %s by its extension', (name, format) => {
    // The extension wins over what the text looks like.
    expect(formatOf(name, 'id,lat,lon')).toBe(format);
    expect(formatOf(name, '{"type":"FeatureCollection"}')).toBe(format);
  });

  it('without a known extension, by content: a JSON object or array, else CSV', () => {
    expect(formatOf('stops', '  \n{"type":"FeatureCollection"}')).toBe('geojson');
    expect(formatOf('stops.dat', '[]')).toBe('geojson');
    expect(formatOf('stops.dat', 'id,lat,lon\n')).toBe('csv');
  });

  it('reads a GeoJSON file with a .dat name by content, and a CSV when told to', () => {
    const dat = path.join(dir, 'plan.dat');
    copyFileSync(path.join(GOOD, 'gj-no-ids.geojson'), dat);
    expect(readStopsFile(dat).format).toBe('geojson');
    // Forced to CSV, the JSON text has no usable header.
    expect(importError(dat, { format: 'csv' }).problems[0]!.code).toBe('header');
  });

  it('reads a CSV with a .json name when the format is given', () => {
    const json = path.join(dir, 'stops.json');
    writeFileSync(json, 'id,lat,lon\nP1,48.8566,2.3522\n');
    expect(importError(json).problems[0]!.code).toBe('invalid-json');
    const stops = readStopsFile(json, { format: 'csv' });
    expect(stops.ids).toEqual(['P1']);
    expect(stops.format).toBe('csv');
  });
});
