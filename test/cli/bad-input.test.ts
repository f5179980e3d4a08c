/**
 * Bad input through the command line, in-process: `zoneplan plan <bad file> --zones 3 --out ...`
 * must exit with 2, say on stderr which file, row or feature, field and value are wrong, show no
 * stack trace, and write no output file.
 */
import { existsSync, mkdtempSync, readdirSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { afterEach, beforeEach, describe, expect, it } from 'vitest';
import { EXIT_OK, EXIT_USAGE, main, type CliIo } from '../../src/cli/main.js';

const FIXTURES = fileURLToPath(new URL('../fixtures/', import.meta.url));

interface Captured {
  readonly io: CliIo;
  readonly out: () => string;
  readonly err: () => string;
}

function capture(): Captured {
  let out = '';
  let err = '';
  return {
    io: { out: (s) => void (out += s), err: (s) => void (err += s), isTty: false },
    out: () => out,
    err: () => err,
  };
}

interface CliCase {
  readonly file: string;
  /** The start of the first problem line after "error: <file>: ". */
  readonly place: string;
  readonly errors: number;
  readonly args?: readonly string[];
}

const CASES: readonly CliCase[] = [
  { file: 'bad/csv-lat-range.csv', place: 'row 3, field "lat", value "91.5": latitude must be between -90 and 90', errors: 1 },
  { file: 'bad/csv-lat-missing.csv', place: 'row 3, field "lat", value "": latitude is missing', errors: 1 },
  { file: 'bad/csv-lat-not-number.csv', place: 'row 4, field "lat", value "48.85.30": latitude is not a number', errors: 1 },
  { file: 'bad/csv-lon-range.csv', place: 'row 4, field "lon", value "-180.5": longitude must be between -180 and 180', errors: 1 },
  { file: 'bad/csv-lon-missing-cell.csv', place: 'row 3, field "lon": the row has 2 cells and no longitude', errors: 1 },
  { file: 'bad/csv-demand-negative.csv', place: 'row 3, field "weight", value "-2": demand must not be negative', errors: 1 },
  { file: 'bad/csv-demand-not-finite.csv', place: 'row 2, field "demand", value "inf": demand must be a finite number', errors: 1 },
  { file: 'bad/csv-duplicate-id.csv', place: 'row 5, field "stop_id", value "P2": id "P2" is used twice: row 3 has it too', errors: 1 },
  { file: 'bad/csv-lat-range-after-multiline.csv', place: 'row 3, field "lat", value "95"', errors: 1 },
  { file: 'bad/csv-several-problems.csv', place: 'row 3, field "lat", value "": latitude is missing', errors: 3 },
  { file: 'bad/txt-utf16le-lat-range.txt', place: 'row 3, field "lat", value "-91"', errors: 1 },
  { file: 'bad/csv-lat-override-missing.csv', place: 'row 1, field "Breite": the latitude column "Breite" was asked for', errors: 1, args: ['--lat', 'Breite'] },
  { file: 'bad/csv-header-unknown-names.csv', place: 'row 1: no latitude column', errors: 2 },
  { file: 'bad/gj-not-point.geojson', place: 'feature 1, field "geometry.type", value "LineString": geometry must be a Point', errors: 1 },
  { file: 'bad/gj-lat-range.geojson', place: 'feature 2, field "geometry.coordinates[1]", value "91": latitude must be between -90 and 90', errors: 1 },
  { file: 'bad/gj-lon-string.geojson', place: 'feature 1, field "geometry.coordinates[0]", value "2.2945": longitude must be a finite number', errors: 1 },
  { file: 'bad/gj-coordinate-overflow.geojson', place: 'feature 1, field "geometry.coordinates[0]", value "Infinity"', errors: 1 },
  { file: 'bad/gj-demand-negative.geojson', place: 'feature 2, field "properties.demand", value "-1": demand must not be negative', errors: 1 },
  { file: 'bad/gj-duplicate-feature-id.geojson', place: 'feature 2, field "id", value "P1": id "P1" is used twice: feature 0 has it too', errors: 1 },
  { file: 'bad/gj-several-problems.geojson', place: 'feature 1, field "geometry.coordinates[0]", value "200"', errors: 2 },
];

/** Whole-file problems: no row or field to name, but the file and what is wrong. */
const FILE_CASES: readonly { file: string; message: string }[] = [
  { file: 'bad/csv-empty.csv', message: 'the file is empty' },
  { file: 'bad/csv-header-only.csv', message: 'the file has a header but no stop rows' },
  { file: 'bad/gj-invalid-json.geojson', message: 'the file is not valid JSON at line 3, column 1' },
  { file: 'bad/gj-not-feature-collection.geojson', message: 'the GeoJSON object has type "Feature"' },
];

let outDir: string;
beforeEach(() => {
  outDir = mkdtempSync(path.join(tmpdir(), 'zoneplan-cli-'));
});
afterEach(() => rmSync(outDir, { recursive: true, force: true }));

async function plan(file: string, extra: readonly string[] = []) {
  const c = capture();
  const out = path.join(outDir, 'plan.geojson');
  const assignments = path.join(outDir, 'assignments.csv');
  const code = await main(['plan', file, '--zones', '3', '--out', out, '--assignments', assignments, ...extra], c.io);
  return { code, stdout: c.out(), stderr: c.err(), out, assignments };
}

function expectNoStackTrace(stderr: string): void {
  expect(stderr).not.toMatch(/^\s*at\s/m);
  expect(stderr).not.toMatch(/internal error|Error:|\.ts:\d+/);
}

describe('zoneplan plan with bad input', () => {
  it.each(CASES)('$file: exit 2, names the place, writes nothing', async (c) => {
    const file = path.join(FIXTURES, c.file);
    const r = await plan(file, c.args);
    expect(r.code).toBe(EXIT_USAGE);
    expect(r.stdout).toBe('');
    const lines = r.stderr.trimEnd().split('\n');
    expect(lines[0]!.startsWith(`error: ${file}: ${c.place}`), r.stderr).toBe(true);
    expect(lines).toHaveLength(c.errors + 1);
    for (const line of lines.slice(0, -1)) expect(line.startsWith(`error: ${file}: `)).toBe(true);
    expect(lines.at(-1)).toBe(`${file}: ${c.errors} error${c.errors === 1 ? '' : 's'}; nothing was imported or written`);
    expectNoStackTrace(r.stderr);
    expect(existsSync(r.out)).toBe(false);
    expect(existsSync(r.assignments)).toBe(false);
    expect(readdirSync(outDir)).toEqual([]);
  });

  it.each(FILE_CASES)('$file: exit 2, names the file, writes nothing', async (c) => {
    const file = path.join(FIXTURES, c.file);
    const r = await plan(file);
    expect(r.code).toBe(EXIT_USAGE);
    expect(r.stdout).toBe('');
    expect(r.stderr.startsWith(`error: ${file}: ${c.message}`), r.stderr).toBe(true);
    expect(r.stderr.endsWith(`${file}: 1 error; nothing was imported or written\n`)).toBe(true);
    expectNoStackTrace(r.stderr);
    expect(readdirSync(outDir)).toEqual([]);
  });

  it('a file that does not exist: exit 2, no stack trace, nothing written', async () => {
    const file = path.join(outDir, 'missing.csv');
    const r = await plan(file);
    expect(r.code).toBe(EXIT_USAGE);
    expect(r.stderr).toBe(`error: ${file}: no such file\n${file}: 1 error; nothing was imported or written\n`);
    expect(readdirSync(outDir)).toEqual([]);
  });
});

describe('zoneplan plan with good input (the control: the same command does write)', () => {
  it('writes both files for a good file', async () => {
    const r = await plan(path.join(FIXTURES, 'good/csv-comma.csv'), ['--zones', '2', '--threads', '1', '--quiet']);
    expect(r.stderr).toBe('');
    expect(r.code).toBe(EXIT_OK);
    expect(readdirSync(outDir).sort()).toEqual(['assignments.csv', 'plan.geojson']);
  });

  it('goes on with a warning that names the row', async () => {
    const file = path.join(FIXTURES, 'warn/csv-zero-zero.csv');
    const r = await plan(file, ['--threads', '1', '--quiet']);
    expect(r.code).toBe(EXIT_OK);
    expect(r.stderr).toMatch(new RegExp(`^warning: ${file.replace(/[.*+?^${}()|[\]\\]/g, '\\$&')}: row 4: 1 stop at longitude 0, latitude 0`));
    expect(readdirSync(outDir).sort()).toEqual(['assignments.csv', 'plan.geojson']);
  });
});
