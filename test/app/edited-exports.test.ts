/**
 * Exports and rebalances of a plan with manual edits, through the session (what the window's
 * Export and Versions panels call): centres pinned and freed by hand, stops moved and locked.
 * The GeoJSON is checked with geojson-validation (an outside reference for RFC 7946 structure);
 * distances to the pinned position by the textbook haversine formula, independent of src/geo.
 */
import * as GJV from 'geojson-validation';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { Feature, FeatureCollection, Point } from 'geojson';
import { solveStops } from '../../src/api/plan-file.js';
import { loadPlan, savePlanToProject } from '../../src/api/project.js';
import type { AppSession } from '../../src/api/session.js';
import { readStopsText } from '../../src/api/text-import.js';
import { EARTH_RADIUS_KM } from '../../src/geo/constants.js';
import { lonLatFromVector } from '../../src/geo/unit.js';
import type { Plan } from '../../src/solve/plan.js';
import { emptySession, stopsCsv } from './helpers.js';

type Props = Record<string, unknown>;
type Doc = FeatureCollection<Point | null, Props>;

/** Haversine great-circle km between [lon, lat] degrees (textbook formula; independent of src/geo). */
function haversineKm(lon1: number, lat1: number, lon2: number, lat2: number): number {
  const rad = Math.PI / 180;
  const a = Math.sin(((lat2 - lat1) * rad) / 2) ** 2 + Math.cos(lat1 * rad) * Math.cos(lat2 * rad) * Math.sin(((lon2 - lon1) * rad) / 2) ** 2;
  return 2 * EARTH_RADIUS_KM * Math.asin(Math.min(1, Math.sqrt(a)));
}

/** The centre of the zone labelled `zone`, [lon, lat]. */
function centreOf(plan: Plan, zone: number): [number, number] {
  const j = plan.zoneIds.indexOf(zone);
  expect(j, `zone ${zone} in ${plan.zoneIds.join(', ')}`).toBeGreaterThanOrEqual(0);
  return lonLatFromVector(plan.centres[3 * j]!, plan.centres[3 * j + 1]!, plan.centres[3 * j + 2]!);
}

/** The zone label of every stop, by stop id. */
function zonesById(ids: readonly string[], plan: Plan): Map<string, number> {
  return new Map(ids.map((id, i) => [id, plan.zoneIds[plan.assignment[i]!]!]));
}

let session: AppSession;
let file: string;
/** The plan as solved: 4 zones, their centres [lon, lat] by label. */
let solvedCentres: Map<number, [number, number]>;

beforeAll(async () => {
  ({ session, file } = await emptySession());
  const imp = await session.importStops({ name: 'stops.csv', text: stopsCsv(400) });
  expect(imp.ok).toBe(true);
  const solved = await solveStops(readStopsText('stops.csv', stopsCsv(400)), { zones: 4, seed: 3, threads: 1 });
  for (const name of ['pinned', 'pinned then freed', 'moved and locked']) await savePlanToProject(file, solved, name);
  // Zone 1's centre a fixed depot of the run (as from a depots file).
  await savePlanToProject(file, { ...solved, plan: { ...solved.plan, fixedZones: 1 } }, 'depot freed');
  solvedCentres = new Map(solved.plan.zoneIds.map((z) => [z, centreOf(solved.plan, z)]));
});

afterAll(async () => {
  await session.close();
});

async function exported(plan: string, kind: 'plan' | 'centres' | 'stops' | 'zones'): Promise<Doc> {
  const r = await session.exportPlan({ plan, kind, file: null });
  const doc = JSON.parse(r.content!) as Doc;
  // geojson-validation: every feature and the collection are RFC 7946 structure.
  expect(GJV.valid(doc, true)).toEqual([]);
  expect(GJV.isFeatureCollection(doc)).toBe(true);
  return doc;
}

function centreFeature(doc: Doc, zone: number): Feature<Point | null, Props> {
  const f = doc.features.filter((x) => x.properties.zone === zone && (x.properties.role === undefined || x.properties.role === 'centre'));
  expect(f).toHaveLength(1);
  return f[0]!;
}

/** A position about 6 km off zone 2's solved centre, where a planner might put its depot. */
const pinAt = (): [number, number] => {
  const [lon, lat] = solvedCentres.get(2)!;
  return [Number((lon + 0.07).toFixed(6)), Number((lat + 0.03).toFixed(6))];
};

describe('exports after a centre is pinned or freed by hand', () => {
  beforeAll(async () => {
    const [lon, lat] = pinAt();
    await session.edit('pinned', { kind: 'pin-centre', zone: 2, lon, lat });
    await session.edit('pinned then freed', { kind: 'pin-centre', zone: 2, lon, lat });
    await session.edit('pinned then freed', { kind: 'unpin-centre', zone: 2 });
    await session.edit('depot freed', { kind: 'unpin-centre', zone: 1 });
  });

  it('the centres layer has the pinned position and fixed: true for that zone only', async () => {
    const doc = await exported('pinned', 'centres');
    expect(doc.features).toHaveLength(4);
    const [lon, lat] = pinAt();
    const f = centreFeature(doc, 2);
    expect(f.geometry!.coordinates[0]).toBeCloseTo(lon, 9);
    expect(f.geometry!.coordinates[1]).toBeCloseTo(lat, 9);
    expect(f.properties.fixed).toBe(true);
    // The other centres: where they were solved, not fixed.
    for (const z of [1, 3, 4]) {
      const g = centreFeature(doc, z);
      expect(g.properties.fixed, `zone ${z}`).toBe(false);
      expect(g.geometry!.coordinates[0]).toBeCloseTo(solvedCentres.get(z)![0], 6);
      expect(g.geometry!.coordinates[1]).toBeCloseTo(solvedCentres.get(z)![1], 6);
    }
  });

  it('the plan GeoJSON and the zones layer say the same (one fixed flag per zone, as in the zone table)', async () => {
    const plan = await exported('pinned', 'plan');
    const centres = plan.features.filter((f) => f.properties.role === 'centre');
    expect(centres.map((f) => [f.properties.zone, f.properties.fixed])).toEqual([
      [1, false],
      [2, true],
      [3, false],
      [4, false],
    ]);
    expect(centreFeature(plan, 2).geometry!.coordinates).toEqual(centreFeature(await exported('pinned', 'centres'), 2).geometry!.coordinates);
    const zones = await exported('pinned', 'zones');
    expect(zones.features.map((f) => [f.properties.zone, f.properties.fixed])).toEqual(centres.map((f) => [f.properties.zone, f.properties.fixed]));
    const view = await session.plan('pinned');
    expect(view.zones.map((z) => [z.zone, z.fixed])).toEqual(centres.map((f) => [f.properties.zone, f.properties.fixed]));
  });

  it('pinned then freed: not fixed, the centre where it was freed (its last pinned position)', async () => {
    const doc = await exported('pinned then freed', 'centres');
    expect(doc.features.map((f) => f.properties.fixed)).toEqual([false, false, false, false]);
    const [lon, lat] = pinAt();
    expect(centreFeature(doc, 2).geometry!.coordinates[0]).toBeCloseTo(lon, 9);
    expect(centreFeature(doc, 2).geometry!.coordinates[1]).toBeCloseTo(lat, 9);
  });

  it('a depot of the run freed by hand: not fixed in the export', async () => {
    const plan = await exported('depot freed', 'plan');
    expect(plan.features.filter((f) => f.properties.role === 'centre').map((f) => f.properties.fixed)).toEqual([false, false, false, false]);
    expect(centreFeature(plan, 1).geometry!.coordinates[0]).toBeCloseTo(solvedCentres.get(1)![0], 6);
  });
});

describe('exports after stops are moved and locked by hand', () => {
  /** Stop 0 moved to the zone of stop 1 and locked there; stop 2 locked where it is. */
  let moved: { id: string; to: number };
  let locked: { id: string; zone: number };

  beforeAll(async () => {
    const ids = await session.stopIds('moved and locked');
    const s1 = await session.stop('moved and locked', 1);
    const s0 = await session.stop('moved and locked', 0);
    const to = s1.zone !== s0.zone ? s1.zone : (await session.plan('moved and locked')).zones.find((z) => z.zone !== s0.zone)!.zone;
    await session.edit('moved and locked', { kind: 'move', stop: 0, zone: to });
    await session.edit('moved and locked', { kind: 'lock', stop: 0 });
    await session.edit('moved and locked', { kind: 'lock', stop: 2 });
    moved = { id: ids[0]!, to };
    locked = { id: ids[2]!, zone: (await session.stop('moved and locked', 2)).zone };
  });

  it('the assignments CSV and the stops layer have the stops in their zones as edited, locked flags set', async () => {
    const csv = (await session.exportPlan({ plan: 'moved and locked', kind: 'assignments', file: null })).content!;
    const rows = new Map(csv.trim().split('\n').slice(1).map((l) => [l.split(',')[0]!, Number(l.split(',')[1])]));
    expect(rows.size).toBe(400);
    expect(rows.get(moved.id)).toBe(moved.to);
    expect(rows.get(locked.id)).toBe(locked.zone);
    const stops = await exported('moved and locked', 'stops');
    const byId = new Map(stops.features.map((f) => [f.properties.id, f.properties]));
    expect(byId.get(moved.id)).toMatchObject({ zone: moved.to, locked: true });
    expect(byId.get(locked.id)).toMatchObject({ zone: locked.zone, locked: true });
    expect(stops.features.filter((f) => f.properties.locked === true)).toHaveLength(2);
    // Every stop's zone in the layer is its zone in the CSV.
    for (const f of stops.features) expect(f.properties.zone).toBe(rows.get(f.properties.id as string));
  });
});

describe('rebalance from a plan with manual edits', () => {
  /** A second stop set: the same stops, double demand in the first cluster (every 4th stop). */
  let week2: number;

  beforeAll(async () => {
    const lines = stopsCsv(400).trim().split('\n');
    const text = [lines[0]!, ...lines.slice(1).map((l, i) => (i % 4 === 0 ? l.replace(/,(\d+)$/, (_m, d: string) => `,${Number(d) * 2}`) : l))].join('\n');
    const imp = await session.importStops({ name: 'week 2.csv', text });
    expect(imp.ok).toBe(true);
    if (imp.ok) week2 = imp.stopSet.id;
  });

  it('a pinned centre stays exactly where it was pinned (and stays fixed); the free centres move', async () => {
    const { view } = await session.rebalance('pinned', week2, 'pinned, week 2', null);
    const after = (await loadPlan(file, 'pinned, week 2')).plan;
    const [lon, lat] = pinAt();
    const centre = centreOf(after, 2);
    expect(haversineKm(lon, lat, ...centre)).toBeLessThanOrEqual(1e-9);
    // The rebalanced plan keeps it as a fixed depot (fixed zones first, labels kept).
    expect(after.fixedZones).toBe(1);
    expect(after.zoneIds).toEqual([2, 1, 3, 4]);
    expect(view.zones.find((z) => z.zone === 2)!.fixed).toBe(true);
    expect(view.zones.filter((z) => z.fixed).map((z) => z.zone)).toEqual([2]);
    const doc = await exported('pinned, week 2', 'centres');
    expect(doc.features.filter((f) => f.properties.fixed === true).map((f) => f.properties.zone)).toEqual([2]);
    // The others followed their zones' new demand: not frozen.
    const drift = Math.max(...[1, 3, 4].map((z) => haversineKm(...solvedCentres.get(z)!, ...centreOf(after, z))));
    expect(drift).toBeGreaterThan(0.01);
  });

  it('a centre pinned and then freed is free to move: it leaves the position it was freed at', async () => {
    await session.rebalance('pinned then freed', week2, 'freed, week 2', null);
    const after = (await loadPlan(file, 'freed, week 2')).plan;
    expect(after.fixedZones).toBe(0);
    expect(after.zoneIds).toEqual([1, 2, 3, 4]);
    const [lon, lat] = pinAt();
    // Freed 6 km from its stops' centre, it moves back towards them.
    expect(haversineKm(lon, lat, ...centreOf(after, 2))).toBeGreaterThan(1);
    // A depot of the run, freed by hand: no longer fixed in the new plan.
    await session.rebalance('depot freed', week2, 'depot freed, week 2', null);
    const depot = (await loadPlan(file, 'depot freed, week 2')).plan;
    expect(depot.fixedZones).toBe(0);
    expect(haversineKm(...solvedCentres.get(1)!, ...centreOf(depot, 1))).toBeGreaterThan(0.01);
  });

  it('stops locked by hand stay in the zone they are locked to; a stop only moved goes back', async () => {
    const ids = await session.stopIds('moved and locked');
    // Stop 3 moved to a far zone without a lock: the rebalance takes it back to a nearer one.
    const s3 = await session.stop('moved and locked', 3);
    const far = (await session.plan('moved and locked')).zones
      .map((z) => ({ zone: z.zone, km: haversineKm(s3.lon, s3.lat, ...z.centre) }))
      .sort((a, b) => b.km - a.km)[0]!.zone;
    await session.edit('moved and locked', { kind: 'move', stop: 3, zone: far });
    // Stop 5 moved to the same far zone and locked there.
    await session.edit('moved and locked', { kind: 'move', stop: 5, zone: far });
    await session.edit('moved and locked', { kind: 'lock', stop: 5 });
    const before = (await session.plan('moved and locked')).zones;
    expect(before.length).toBe(4);
    const lockedZones = new Map<string, number>();
    for (const i of [0, 2, 5]) lockedZones.set(ids[i]!, (await session.stop('moved and locked', i)).zone);

    const { report } = await session.rebalance('moved and locked', week2, 'locked, week 2', null);
    expect(report.moved).toBeGreaterThan(0);
    const after = await loadPlan(file, 'locked, week 2');
    const zones = zonesById(after.stops.ids, after.plan);
    for (const [id, zone] of lockedZones) {
      expect(zones.get(id), id).toBe(zone);
      expect(after.plan.locked![after.stops.ids.indexOf(id)], id).toBe(after.plan.zoneIds.indexOf(zone));
    }
    expect(zones.get(ids[3]!)).not.toBe(far);
    let count = 0;
    for (const z of after.plan.locked!) if (z >= 0) count++;
    expect(count).toBe(3);
  });
});
