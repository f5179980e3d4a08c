import { describe, expect, it, beforeAll, afterAll } from 'vitest';
import { mkdtempSync, readFileSync, rmSync, existsSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { spawnSync } from 'node:child_process';
import * as GJV from 'geojson-validation';
import Papa from 'papaparse';
import { main, type CliIo } from '../../src/cli/main.js';
import type { PlanReport } from '../../src/api/types.js';

const root = path.resolve(import.meta.dirname, '../..');
const demo = path.join(root, 'demo-data', 'tallowmere-stops.csv');
const islands = path.join(root, 'demo-data', 'sefa-visits.geojson');
let work: string;

function capture(): CliIo & { stdout: () => string; stderr: () => string } {
  let out = '';
  let err = '';
  return { out: (s) => (out += s), err: (s) => (err += s), isTty: false, stdout: () => out, stderr: () => err };
}

beforeAll(() => {
  work = mkdtempSync(path.join(tmpdir(), 'zoneplan-cli-'));
});
afterAll(() => rmSync(work, { recursive: true, force: true }));

describe('zoneplan plan on the demo', () => {
  let report: PlanReport;
  let geojson: { type: string; features: { type: string; geometry: { type: string; coordinates: number[] }; properties: Record<string, unknown> }[]; crs?: unknown };
  let csvRows: Record<string, string>[];

  beforeAll(async () => {
    const io = capture();
    const code = await main(['plan', demo, '--zones', '12', '--seed', '3', '--out', path.join(work, 'plan.geojson'), '--assignments', path.join(work, 'plan.csv'), '--json'], io);
    expect(code, io.stderr()).toBe(0);
    report = JSON.parse(io.stdout()) as PlanReport;
    geojson = JSON.parse(readFileSync(path.join(work, 'plan.geojson'), 'utf8'));
    csvRows = Papa.parse<Record<string, string>>(readFileSync(path.join(work, 'plan.csv'), 'utf8'), { header: true, skipEmptyLines: true }).data;
  });

  it('reports every stop in exactly one of the 12 zones', () => {
    expect(report.zones).toHaveLength(12);
    expect(report.zones.reduce((s, z) => s + z.stops, 0)).toBe(report.input.stops);
    expect(report.input.stops).toBe(4201);
    expect(report.zones.reduce((s, z) => s + z.demand, 0)).toBeCloseTo(report.input.totalDemand, 9);
    expect(report.converged).toBe(true);
    expect(report.seed).toBe(3);
  });

  it('writes a GeoJSON plan that geojson-validation accepts (RFC 7946 structure)', () => {
    expect(GJV.valid(geojson)).toBe(true);
    // RFC 7946 section 4: no "crs" member.
    expect(geojson.crs).toBeUndefined();
    const centres = geojson.features.filter((f) => f.properties.role === 'centre');
    const stops = geojson.features.filter((f) => f.properties.role === 'stop');
    const zones = geojson.features.filter((f) => f.properties.role === 'zone');
    expect(centres).toHaveLength(12);
    expect(stops).toHaveLength(4201);
    expect(zones).toHaveLength(12);
    for (const z of zones) expect(['Polygon', 'MultiPolygon']).toContain(z.geometry.type);
    for (const f of [...centres, ...stops]) {
      expect(f.geometry.type).toBe('Point');
      const [lon, lat] = f.geometry.coordinates as [number, number];
      // [longitude, latitude] order (RFC 7946 section 3.1.1); at most 6 decimals (section 11.2).
      expect(lon).toBeGreaterThan(9);
      expect(lon).toBeLessThan(13);
      expect(lat).toBeGreaterThan(47);
      expect(lat).toBeLessThan(50);
      for (const v of [lon, lat]) expect(Math.abs(v * 1e6 - Math.round(v * 1e6))).toBeLessThan(1e-6);
    }
    const byZone = new Map<number, number>();
    for (const s of stops) byZone.set(s.properties.zone as number, (byZone.get(s.properties.zone as number) ?? 0) + 1);
    for (const c of centres) expect(byZone.get(c.properties.zone as number)).toBe(c.properties.stops);
  });

  it('writes an assignments CSV with one row per stop that matches the GeoJSON', () => {
    expect(Object.keys(csvRows[0]!)).toEqual(['stop_id', 'zone', 'km_to_centre', 'demand']);
    expect(csvRows).toHaveLength(4201);
    const zoneOf = new Map(geojson.features.filter((f) => f.properties.role === 'stop').map((f) => [f.properties.id, f.properties.zone]));
    for (const r of csvRows) expect(Number(r.zone)).toBe(zoneOf.get(r.stop_id));
    const maxKm = Math.max(...report.zones.map((z) => z.maxKm));
    for (const r of csvRows) expect(Number(r.km_to_centre)).toBeLessThanOrEqual(maxKm + 0.001);
  });

  it('gives byte-identical files for the same seed', async () => {
    const io = capture();
    const again = path.join(work, 'again.geojson');
    expect(await main(['plan', demo, '--zones', '12', '--seed', '3', '--out', again, '--threads', '1'], io)).toBe(0);
    const a = JSON.parse(readFileSync(path.join(work, 'plan.geojson'), 'utf8'));
    const b = JSON.parse(readFileSync(again, 'utf8'));
    expect(b.features).toEqual(a.features);
  });
});

describe('zoneplan plan text output', () => {
  it('prints the per-zone table, the objective and the distance note', async () => {
    const io = capture();
    expect(await main(['plan', demo, '--zones', '4'], io)).toBe(0);
    const text = io.stdout();
    expect(text).toMatch(/zone\s+stops\s+demand\s+mean km\s+max km/);
    expect(text.split('\n').filter((l) => /^\s+\d+\s+\d+\s+\d+\s+\d+\.\d\d\s+\d+\.\d\d$/.test(l))).toHaveLength(4);
    expect(text).toMatch(/objective \d\.\d+e\+\d+ km²/);
    expect(text).toContain('not road distances or drive times');
  });

  it('plans the islands across the antimeridian with centres on the islands', async () => {
    const io = capture();
    expect(await main(['plan', islands, '--zones', '5', '--json'], io)).toBe(0);
    const r = JSON.parse(io.stdout()) as PlanReport;
    expect(r.input.fields.demand).toBe('properties.minutes');
    for (const z of r.zones) {
      const [lon, lat] = z.centre;
      // The islands lie between 178.6 E and 179.4 W; a planar mean of mixed signs would land near 0.
      expect(lon > 178.4 || lon < -179.2).toBe(true);
      expect(lat).toBeGreaterThan(-18);
      expect(lat).toBeLessThan(-16);
      expect(z.maxKm).toBeLessThan(80);
    }
  });
});

describe('zoneplan usage errors', () => {
  it.each([
    [['plan', 'x.csv'], /required option '-k, --zones <K>'/],
    [['plan', 'x.csv', '--zones', '0'], /zones must be at least 1/],
    [['plan', 'x.csv', '--zones', 'three'], /zones must be a whole number/],
    [['plan', 'x.csv', '--zones', '3', '--centre', 'middle'], /Allowed choices are arc, mean/],
    [['frobnicate'], /unknown command 'frobnicate'/],
    [['plan', 'x.csv', '--zones', '2', '--delimiter', 'pipe'], /delimiter must be comma, semicolon or tab/],
  ])('%j exits 2 with a message', async (args, message) => {
    const io = capture();
    expect(await main(args, io)).toBe(2);
    expect(io.stderr()).toMatch(message);
  });

  it('names a missing input file', async () => {
    const io = capture();
    const out = path.join(work, 'never.geojson');
    expect(await main(['plan', path.join(work, 'missing.csv'), '--zones', '2', '--out', out], io)).toBe(2);
    expect(io.stderr()).toContain('missing.csv: no such file');
    expect(existsSync(out)).toBe(false);
  });

  it('refuses more zones than distinct locations, saying how many there are', async () => {
    const io = capture();
    expect(await main(['plan', demo, '--zones', '5000'], io)).toBe(2);
    expect(io.stderr()).toMatch(/5000 zones asked for, but the stops sit at only 4201 distinct locations/);
  });

  it('check validates without planning', async () => {
    const io = capture();
    expect(await main(['check', demo], io)).toBe(0);
    expect(io.stdout()).toMatch(/4201 stops, demand 9901, csv \(id: stop_id, lat: lat, lon: lon, demand: parcels\)/);
    expect(io.stdout()).toContain('no problems found');
  });

  it('--help exits 0 and lists the options', async () => {
    const io = capture();
    expect(await main(['plan', '--help'], io)).toBe(0);
    expect(io.stdout()).toContain('--zones <K>');
    expect(io.stdout()).toContain('--assignments <file>');
  });
});

describe('the installed command', () => {
  it('npx zoneplan runs the built bin from the checkout', () => {
    const r = spawnSync('npx', ['--no-install', 'zoneplan', 'check', demo], { cwd: root, encoding: 'utf8' });
    expect(r.stderr).toBe('');
    expect(r.status).toBe(0);
    expect(r.stdout).toContain('4201 stops');
  });

  it('exits 2 for bad input, without a stack trace', () => {
    const r = spawnSync(process.execPath, [path.join(root, 'bin', 'zoneplan.js'), 'plan', path.join(root, 'package.json'), '--zones', '2'], { cwd: root, encoding: 'utf8' });
    expect(r.status).toBe(2);
    expect(r.stderr).toMatch(/package\.json/);
    expect(r.stderr).not.toMatch(/\n\s+at /);
  });
});
