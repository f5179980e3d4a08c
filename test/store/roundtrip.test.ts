/**
 * Everything a project holds comes back as it was saved: stop sets with their warnings, plans
 * with every field (limits, locks, depots, parent, boundaries, settings), manual edits; names are
 * unique; every save is one transaction.
 */
import Database from 'better-sqlite3';
import { readFileSync } from 'node:fs';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { solveStops, writePlanFiles, type SolvedPlan } from '../../src/api/plan-file.js';
import {
  appendEdit,
  createProject,
  getProjectInfo,
  importStopsToProject,
  listEdits,
  listPlans,
  listStopSets,
  loadPlan,
  renamePlan,
  savePlanToProject,
} from '../../src/api/project.js';
import type { PlanSettingsInput } from '../../src/api/types.js';
import { readStopsFile } from '../../src/io/read.js';
import { ProjectStore } from '../../src/store/index.js';
import { root, tempDir } from './support.js';
import { figuresOf, solvedOf, syntheticPlan, syntheticStops } from './synthetic.js';

const tmp = tempDir('roundtrip');
afterAll(() => tmp.cleanup());
const fixture = (...p: string[]): string => path.join(root, 'test', 'fixtures', ...p);
const demo = path.join(root, 'demo-data', 'tallowmere-stops.csv');

describe('stop sets', () => {
  it('come back exactly as read, warnings included (CSV and GeoJSON)', async () => {
    const file = tmp.file('stops.zoneplan');
    await createProject(file);
    const sources = [fixture('warn', 'csv-zero-zero.csv'), fixture('warn', 'gj-zero-demand.geojson'), fixture('good', 'csv-latin1.csv'), fixture('warn', 'csv-duplicate-position.csv')];
    const before = Date.now();
    for (const s of sources) await importStopsToProject(file, s);
    const listed = await listStopSets(file);
    expect(listed.map((s) => s.source)).toEqual(sources);
    const store = ProjectStore.open(file, { write: false });
    try {
      for (let k = 0; k < sources.length; k++) {
        const read = readStopsFile(sources[k]!);
        expect(read.warnings.length).toBeGreaterThan(0);
        expect(listed[k]!.stops).toBe(read.ids.length);
        expect(listed[k]!.format).toBe(read.format);
        expect(listed[k]!.warnings).toEqual(read.warnings);
        expect(Date.parse(listed[k]!.imported)).toBeGreaterThanOrEqual(before - 1);
        expect(store.loadStopSet(listed[k]!.id)).toEqual(read);
      }
    } finally {
      store.close();
    }
    // Each import is recorded, the same file twice too.
    await importStopsToProject(file, sources[0]!);
    expect((await getProjectInfo(file)).stopSets).toBe(sources.length + 1);
  });

  it('keeps ids with line breaks, unpaired surrogates, empty and non-ASCII ids exactly', async () => {
    const file = tmp.file('ids.zoneplan');
    await createProject(file);
    const plain = syntheticStops(5, 3, { ids: ['a', 'b', 'Zürich Hbf', '東京', ''] });
    const odd = syntheticStops(5, 4, { ids: ['line\nbreak', '\ud800alone', 'tail\udc00', 'cr\r', '"quoted"'] });
    const store = ProjectStore.open(file, { write: true });
    try {
      const a = store.addStopSet(plain);
      const b = store.addStopSet(odd);
      expect(store.loadStopSet(a.id).ids).toEqual(plain.ids);
      expect(store.loadStopSet(b.id).ids).toEqual(odd.ids);
    } finally {
      store.close();
    }
    const raw = new Database(file, { readonly: true });
    expect(raw.prepare('SELECT ids_encoding FROM stop_set_arrays ORDER BY stop_set_id').all()).toEqual([{ ids_encoding: 'lines' }, { ids_encoding: 'json' }]);
    // "lines": UTF-8 text, one id per line.
    expect((raw.prepare('SELECT ids FROM stop_set_arrays WHERE stop_set_id = 1').get() as { ids: Buffer }).ids.toString('utf8')).toBe('a\nb\nZürich Hbf\n東京\n');
    raw.close();
  });

  it('stores arrays as little-endian IEEE 754 doubles and 32-bit integers', async () => {
    const file = tmp.file('bytes.zoneplan');
    await createProject(file);
    const stops = { ...syntheticStops(1, 1), lonLat: Float64Array.of(1, -2), demand: Float64Array.of(0.5), rows: Int32Array.of(258) };
    const store = ProjectStore.open(file, { write: true });
    store.addStopSet(stops);
    store.close();
    const raw = new Database(file, { readonly: true });
    const r = raw.prepare('SELECT count, lon_lat, demand, rows FROM stop_set_arrays').get() as { count: number; lon_lat: Buffer; demand: Buffer; rows: Buffer };
    raw.close();
    expect(r.count).toBe(1);
    // IEEE 754 binary64: 1 = 0x3FF0000000000000, -2 = 0xC000000000000000, 0.5 = 0x3FE0000000000000 (least significant byte first).
    expect(r.lon_lat.toString('hex')).toBe('000000000000f03f00000000000000c0');
    expect(r.demand.toString('hex')).toBe('000000000000e03f');
    expect(r.rows.toString('hex')).toBe('02010000');
  });
});

describe('a solved plan with depots, locks and capacity', () => {
  const file = tmp.file('plans.zoneplan');
  const settings: PlanSettingsInput = {
    zones: 6,
    seed: 4,
    capacity: 2000,
    depotsFile: fixture('zones', 'depots.csv'),
    locksFile: fixture('zones', 'locks-depots.csv'),
  };
  const boundaries = { type: 'FeatureCollection', features: [{ type: 'Feature', properties: { zone: 1 }, geometry: { type: 'Polygon', coordinates: [[[10, 48], [11, 48], [11, 49], [10, 48]]] } }] };
  let solved: SolvedPlan;
  let base: SolvedPlan;

  beforeAll(async () => {
    await createProject(file);
    const stops = readStopsFile(demo);
    base = await solveStops(stops, { zones: 4, seed: 1 });
    solved = await solveStops(stops, settings);
    await savePlanToProject(file, base, 'base');
    await savePlanToProject(file, solved, 'with limits', { parent: 'base', request: settings, boundaries });
  });

  it('has the limits, locks and depots the test needs', () => {
    expect(solved.plan.limits).not.toBeNull();
    expect(solved.plan.fixedZones).toBe(2);
    expect(solved.plan.locked!.filter((z) => z >= 0)).toHaveLength(3);
  });

  it('loads with every field equal', async () => {
    const loaded = await loadPlan(file, 'with limits');
    expect(loaded.stops).toEqual(solved.stops);
    expect(loaded.plan).toEqual(solved.plan);
    expect(loaded.figures).toEqual(solved.figures);
    expect(loaded.zoneStats).toEqual({ zones: solved.figures.zones, objectiveKm2: solved.figures.objectiveKm2, totalDemand: solved.figures.totalDemand });
    expect(loaded.boundaries).toEqual(boundaries);
    const r = solved.result;
    expect(loaded.result).toMatchObject({
      zones: r.zones,
      objectiveKm2: r.objectiveKm2,
      iterations: r.iterations,
      converged: r.converged,
      bestRestart: r.bestRestart,
      restartObjectivesKm2: r.restartObjectivesKm2,
      startStops: r.startStops,
      seed: r.seed,
      reseeded: r.reseeded,
      distanceEvaluations: r.distanceEvaluations,
      naiveDistanceEvaluations: r.naiveDistanceEvaluations,
    });
    expect(loaded.info).toMatchObject({ name: 'with limits', parent: 'base', request: settings, stops: 4201, zones: 6, fixedZones: 2, hasBoundaries: true, feasible: solved.plan.limits!.feasible, edits: 0 });
    expect(loaded.info.settings).toBe('6 zones, seed 4, capacity 2000, depots depots.csv, locks locks-depots.csv');
  });

  it('exports the same files as the plan it was saved from', async () => {
    const loaded = await loadPlan(file, 'with limits');
    const a = { geojson: tmp.file('a.geojson'), assignments: tmp.file('a.csv') };
    const b = { geojson: tmp.file('b.geojson'), assignments: tmp.file('b.csv') };
    writePlanFiles(solved, a);
    writePlanFiles(loaded, b);
    expect(readFileSync(b.geojson, 'utf8')).toBe(readFileSync(a.geojson, 'utf8'));
    expect(readFileSync(b.assignments, 'utf8')).toBe(readFileSync(a.assignments, 'utf8'));
  });

  it('lists the versions with their parents and shares one stop set between them', async () => {
    const rows = await listPlans(file);
    expect(rows.map((p) => [p.name, p.parent, p.zones, p.stops])).toEqual([
      ['base', null, 4, 4201],
      ['with limits', 'base', 6, 4201],
    ]);
    expect(rows[0]!.objectiveKm2).toBe(base.plan.objectiveKm2);
    expect(rows[0]!.stopSet).toBe(rows[1]!.stopSet);
    expect((await getProjectInfo(file)).stopSets).toBe(1);
  });

  it('refuses a duplicate name (regardless of case) and saves nothing', async () => {
    const before = await getProjectInfo(file);
    await expect(savePlanToProject(file, solved, '  WITH Limits ')).rejects.toMatchObject({
      name: 'ProjectError',
      code: 'duplicate-name',
      message: `${file} already has a plan named "with limits" (names are compared without regard to case); choose another name, or rename the old plan first`,
    });
    await expect(savePlanToProject(file, solved, 'base')).rejects.toMatchObject({ code: 'duplicate-name' });
    expect(await getProjectInfo(file)).toEqual(before);
  });

  it('refuses an unknown parent and an empty name', async () => {
    await expect(savePlanToProject(file, solved, 'orphan', { parent: 'no such plan' })).rejects.toMatchObject({ code: 'no-such-plan', message: `${file} has no plan named "no such plan"; its plans: "base", "with limits"` });
    await expect(savePlanToProject(file, solved, '   ')).rejects.toMatchObject({ code: 'bad-name' });
    expect((await listPlans(file)).map((p) => p.name)).toEqual(['base', 'with limits']);
  });
});

describe('synthetic plans with every edge value', () => {
  it('keep NaN, -0, Infinity, locks and limits bit for bit', async () => {
    const file = tmp.file('edges.zoneplan');
    await createProject(file);
    const stops = syntheticStops(2000, 9);
    const plan = syntheticPlan(stops, 7, 9, { limits: true, locked: true, fixedZones: 2 });
    await savePlanToProject(file, solvedOf(stops, plan), 'edges');
    const loaded = await loadPlan(file, 'edges');
    expect(loaded.plan).toEqual(plan);
    expect(Number.isNaN(loaded.plan.limits!.gap)).toBe(true);
    expect(Object.is(loaded.plan.limits!.bounds.minDemand[1], -0)).toBe(true);
    expect(loaded.plan.limits!.bounds.maxDemand[0]).toBe(Infinity);
    expect(loaded.plan.limits!.notes[0]!.message).toBe('a note with "quotes", ±, and a line\nbreak');
    expect(loaded.result.restartObjectivesKm2).toEqual([plan.objectiveKm2 * 1.01, plan.objectiveKm2, Infinity]);
    expect(loaded.plan.zoneNames).toEqual(['DEPOT-0', 'DEPOT-1', null, null, null, null, null]);
  });

  it('roll back the whole save when a part of it fails (one transaction)', async () => {
    const file = tmp.file('rollback.zoneplan');
    await createProject(file);
    const stops = syntheticStops(1000, 5);
    // A fixed-zone count below 0 breaks a CHECK of the plans table: after the stop set row was written.
    const bad = { ...syntheticPlan(stops, 3, 5), fixedZones: -1 };
    await expect(savePlanToProject(file, solvedOf(stops, bad), 'bad')).rejects.toThrow(/CHECK constraint failed/);
    expect(await getProjectInfo(file)).toMatchObject({ stopSets: 0, plans: 0 });
    const raw = new Database(file, { readonly: true });
    expect(raw.prepare('SELECT count(*) AS n FROM stop_set_arrays').get()).toEqual({ n: 0 });
    raw.close();
  });
});

describe('renaming plans', () => {
  it('renames, keeps edits and children, refuses a taken name and an unknown plan', async () => {
    const file = tmp.file('rename.zoneplan');
    await createProject(file);
    const stops = syntheticStops(100, 1);
    await savePlanToProject(file, solvedOf(stops, syntheticPlan(stops, 3, 1)), 'monday');
    await savePlanToProject(file, solvedOf(stops, syntheticPlan(stops, 3, 2)), 'tuesday', { parent: 'monday' });
    await appendEdit(file, 'monday', { kind: 'lock', stopIndex: 4 });
    const renamed = await renamePlan(file, 'monday', 'week 1 monday');
    expect(renamed).toMatchObject({ name: 'week 1 monday', edits: 1 });
    expect((await listPlans(file)).map((p) => [p.name, p.parent])).toEqual([
      ['week 1 monday', null],
      ['tuesday', 'week 1 monday'],
    ]);
    await expect(loadPlan(file, 'monday')).rejects.toMatchObject({ code: 'no-such-plan' });
    expect((await loadPlan(file, 'week 1 monday')).plan.assignment).toEqual(syntheticPlan(stops, 3, 1).assignment);
    await expect(renamePlan(file, 'tuesday', 'WEEK 1 MONDAY')).rejects.toMatchObject({ code: 'duplicate-name' });
    await expect(renamePlan(file, 'wednesday', 'x')).rejects.toMatchObject({ code: 'no-such-plan' });
    // A change of case only is a rename of the plan to itself.
    expect((await renamePlan(file, 'tuesday', 'Tuesday')).name).toBe('Tuesday');
  });
});

describe('manual edits', () => {
  it('are appended with their time and listed in order, zones by label, stops by id or index', async () => {
    const file = tmp.file('edits.zoneplan');
    await createProject(file);
    const stops = syntheticStops(50, 6);
    const plan = syntheticPlan(stops, 4, 6);
    await savePlanToProject(file, solvedOf(stops, plan), 'p');
    const z = (i: number): number => plan.assignment[i]! + 1; // labels are 1..K
    const other = (i: number): number => (plan.assignment[i]! + 1) % 4 + 1;
    const before = new Date().toISOString();
    const moved = await appendEdit(file, 'p', { kind: 'move', stopId: stops.ids[7]!, zone: other(7) });
    expect(moved).toMatchObject({ kind: 'move', stopIndex: 7, stopId: stops.ids[7], fromZone: z(7), toZone: other(7), centre: null });
    // A second move of the same stop starts from where the first one put it.
    await appendEdit(file, 'p', { kind: 'move', stopIndex: 7, zone: z(7) });
    await appendEdit(file, 'p', { kind: 'lock', stopId: stops.ids[3]! });
    await appendEdit(file, 'p', { kind: 'unlock', stopIndex: 3 });
    await appendEdit(file, 'p', { kind: 'pin-centre', zone: 2, lon: 10.5, lat: 48.25 });
    await appendEdit(file, 'p', { kind: 'unpin-centre', zone: 2 });
    await appendEdit(file, 'p', { kind: 'pin-centre', zone: 3, lon: 10.25, lat: 48 });
    await appendEdit(file, 'p', { kind: 'unpin-centre', zone: 3, lon: 10.75, lat: 48.5 });
    const after = new Date().toISOString();
    const edits = await listEdits(file, 'p');
    expect(edits.map((e) => [e.kind, e.stopIndex, e.stopId, e.fromZone, e.toZone, e.centre])).toEqual([
      ['move', 7, stops.ids[7], z(7), other(7), null],
      ['move', 7, stops.ids[7], other(7), z(7), null],
      ['lock', 3, stops.ids[3], z(3), z(3), null],
      ['unlock', 3, stops.ids[3], z(3), null, null],
      ['pin-centre', null, null, null, 2, [10.5, 48.25]],
      ['unpin-centre', null, null, null, 2, null],
      ['pin-centre', null, null, null, 3, [10.25, 48]],
      ['unpin-centre', null, null, null, 3, [10.75, 48.5]],
    ]);
    for (const e of edits) {
      expect(e.at >= before && e.at <= after).toBe(true);
      expect(e.plan).toBe('p');
    }
    expect(edits.map((e) => e.id)).toEqual([...edits.map((e) => e.id)].sort((a, b) => a - b));
    expect((await listPlans(file))[0]!.edits).toBe(8);
    // The saved plan itself is not changed by edits.
    expect((await loadPlan(file, 'p')).plan.assignment).toEqual(plan.assignment);
  });

  it('refuses edits that do not fit the plan, and records none of them', async () => {
    const file = tmp.file('bad-edits.zoneplan');
    await createProject(file);
    const stops = syntheticStops(20, 7);
    await savePlanToProject(file, solvedOf(stops, syntheticPlan(stops, 3, 7)), 'p');
    const cases: [Parameters<typeof appendEdit>[2], RegExp][] = [
      [{ kind: 'move', stopId: 'nope', zone: 1 }, /has no stop with id "nope"/],
      [{ kind: 'move', stopIndex: 20, zone: 1 }, /index 0\.\.19/],
      [{ kind: 'move', stopIndex: 1 }, /needs the zone/],
      [{ kind: 'move', stopIndex: 1, zone: 4 }, /has no zone 4; its zones are 1\.\.3/],
      [{ kind: 'lock' }, /needs the stop/],
      [{ kind: 'pin-centre', zone: 1, lon: 10, lat: 95 }, /latitude -90\.\.90/],
      [{ kind: 'unpin-centre' }, /needs the zone/],
      [{ kind: 'unpin-centre', zone: 1 }, /the centre of zone 1 of plan "p" is not pinned/],
      [{ kind: 'teleport' } as never, /unknown|needs a kind/],
    ];
    for (const [edit, message] of cases) {
      await expect(appendEdit(file, 'p', edit), JSON.stringify(edit)).rejects.toMatchObject({ code: 'bad-edit', message: expect.stringMatching(message) });
    }
    await expect(appendEdit(file, 'q', { kind: 'unlock', stopIndex: 1 })).rejects.toMatchObject({ code: 'no-such-plan' });
    expect(await listEdits(file, 'p')).toEqual([]);
  });

  it('survive closing and reopening the project', async () => {
    const file = tmp.file('edits-reopen.zoneplan');
    await createProject(file);
    const stops = syntheticStops(30, 8);
    const plan = syntheticPlan(stops, 3, 8);
    await savePlanToProject(file, { ...solvedOf(stops, plan), figures: figuresOf(stops, plan) }, 'p');
    await appendEdit(file, 'p', { kind: 'lock', stopIndex: 0, zone: 3 });
    const store = ProjectStore.open(file, { write: false });
    expect(store.listEdits('p').map((e) => [e.kind, e.stopIndex, e.toZone])).toEqual([['lock', 0, 2]]); // the store keeps zone indices
    store.close();
  });
});
