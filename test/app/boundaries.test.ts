/**
 * Zone polygons follow manual edits on plans too big to redraw at once (here: a lowered
 * threshold): drawn in a worker thread while the view says they are pending, then the plan asked
 * for again has them; only the newest state is drawn, older drawings are stopped or dropped.
 */
import { Worker } from 'node:worker_threads';
import { booleanPointInPolygon } from '@turf/turf';
import type { Feature, FeatureCollection, MultiPolygon, Polygon } from 'geojson';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { BoundariesStamp, PlanView } from '../../src/api/app-types.js';
import { boundariesGeoJson } from '../../src/api/boundaries-json.js';
import { solveStops } from '../../src/api/plan-file.js';
import { savePlanToProject } from '../../src/api/project.js';
import type { AppSession } from '../../src/api/session.js';
import { readStopsText } from '../../src/api/text-import.js';
import type { StopSet } from '../../src/io/stopset.js';
import { boundariesWorker } from '../../src/run/boundaries-run.js';
import type { BoundariesJob } from '../../src/run/boundaries-worker.js';
import { emptySession, stopsCsv } from './helpers.js';

const N = 3000;
const PLAN = 'big plan';

let session: AppSession;
let stops: StopSet;
/** Every boundaries worker the session started, with what it posted. */
const workers: { job: BoundariesJob; posted: unknown[]; exited: boolean }[] = [];
/** The next worker made is this one instead (once). */
let nextWorker: ((job: BoundariesJob) => Worker) | null = null;

beforeAll(async () => {
  let file: string;
  ({ session, file } = await emptySession({
    redrawBoundariesUpTo: 1000,
    boundariesWorkerFactory: (job) => {
      const w = nextWorker ? nextWorker(job) : boundariesWorker(job);
      nextWorker = null;
      const rec = { job, posted: [] as unknown[], exited: false };
      w.on('message', (m) => rec.posted.push(m));
      w.on('exit', () => (rec.exited = true));
      workers.push(rec);
      return w;
    },
  }));
  const text = stopsCsv(N);
  expect((await session.importStops({ name: 'big.csv', text })).ok).toBe(true);
  stops = readStopsText('big.csv', text);
  const solved = await solveStops(stops, { zones: 8, seed: 4, threads: 1 });
  await savePlanToProject(file, solved, PLAN, { boundaries: boundariesGeoJson(solved).geojson });
});

afterAll(async () => {
  await session.close();
});

type Zones = FeatureCollection<Polygon | MultiPolygon, { zone: number }> & { zoneplan?: BoundariesStamp };

function zoneFeature(view: PlanView, zone: number): Feature<Polygon | MultiPolygon> {
  const f = (view.boundaries as Zones).features.find((x) => x.properties.zone === zone);
  expect(f, `zone ${zone} has a polygon`).toBeDefined();
  return f!;
}

/** Which zones' polygons hold stop i (turf as the outside reference). */
function zonesHolding(view: PlanView, i: number): number[] {
  const pt = [stops.lonLat[2 * i]!, stops.lonLat[2 * i + 1]!];
  return (view.boundaries as Zones).features.filter((f) => booleanPointInPolygon(pt, f)).map((f) => f.properties.zone);
}

/** The zone label of every stop now. */
async function labels(): Promise<Int32Array> {
  const view = await session.plan(PLAN);
  const a = await session.planArrays(PLAN);
  const idx = new Int16Array(a.buffer, a.zoneOffset, a.count);
  return Int32Array.from(idx, (j) => view.zones[j]!.zone);
}

/**
 * A stop on a border: its nearest stop lies in another zone (the two Voronoi cells touch), and it
 * lies in its own zone's polygon now. Returns the stop and that other zone.
 */
async function borderStop(skip: ReadonlySet<number> = new Set()): Promise<{ stop: number; from: number; to: number }> {
  const label = await labels();
  const view = await session.plan(PLAN);
  const u = stops.units;
  for (let i = 0; i < N; i++) {
    if (skip.has(i)) continue;
    let best = -1;
    let bestD = Infinity;
    for (let j = 0; j < N; j++) {
      if (j === i) continue;
      const d = (u[3 * i]! - u[3 * j]!) ** 2 + (u[3 * i + 1]! - u[3 * j + 1]!) ** 2 + (u[3 * i + 2]! - u[3 * j + 2]!) ** 2;
      if (d < bestD) {
        bestD = d;
        best = j;
      }
    }
    if (label[best] !== label[i] && zonesHolding(view, i).join() === String(label[i])) return { stop: i, from: label[i]!, to: label[best]! };
  }
  throw new Error('no stop on a border');
}

/** Asks for the plan again until its polygons are no longer pending. */
async function settled(): Promise<PlanView> {
  for (let t = 0; t < 600; t++) {
    const v = await session.plan(PLAN);
    if (!v.boundariesPending) return v;
    await new Promise((res) => setTimeout(res, 50));
  }
  throw new Error('the polygons stayed pending');
}

describe('AppSession: zone polygons of a large plan follow its edits', () => {
  it('draws them in a worker thread: pending at first, then the moved stop lies in its new zone', async () => {
    const v0 = await session.plan(PLAN);
    expect(v0.boundariesPending).toBe(false);
    expect(v0.boundariesVersion).toBe(v0.version);
    expect((v0.boundaries as Zones).zoneplan).toEqual({ plan: PLAN, version: v0.version, boundariesVersion: v0.version, pending: false });
    const { stop, from, to } = await borderStop();
    expect(zonesHolding(v0, stop)).toEqual([from]);
    const count = workers.length;

    const v1 = await session.edit(PLAN, { kind: 'move', stop, zone: to });
    // The edit answers at once with the polygons drawn before, saying newer ones are coming.
    expect(v1.version).toBeGreaterThan(v0.version);
    expect(v1.boundariesPending).toBe(true);
    expect(v1.boundariesVersion).toBe(v0.version);
    expect((v1.boundaries as Zones).features).toEqual((v0.boundaries as Zones).features);
    expect((v1.boundaries as Zones).zoneplan).toEqual({ plan: PLAN, version: v1.version, boundariesVersion: v0.version, pending: true });
    expect(v1.zones.find((z) => z.zone === to)!.stops).toBe(v0.zones.find((z) => z.zone === to)!.stops + 1);

    const v2 = await settled();
    expect(v2.version).toBe(v1.version);
    expect(v2.boundariesVersion).toBe(v1.version);
    expect((v2.boundaries as Zones).zoneplan).toEqual({ plan: PLAN, version: v1.version, boundariesVersion: v1.version, pending: false });
    expect(zonesHolding(v2, stop)).toEqual([to]);
    expect(booleanPointInPolygon([stops.lonLat[2 * stop]!, stops.lonLat[2 * stop + 1]!], zoneFeature(v2, from))).toBe(false);
    // The zone's figures in the polygons are those after the edit.
    const props = zoneFeature(v2, to).properties as { stops: number };
    expect(props.stops).toBe(v1.zones.find((z) => z.zone === to)!.stops);
    // One drawing, of the plan without its stop ids.
    expect(workers.length).toBe(count + 1);
    expect(workers[count]!.job.solved.stops.ids).toEqual([]);
    expect(workers[count]!.job.solved.plan.assignment[stop]).toBe(v1.zones.findIndex((z) => z.zone === to));

    // Undo draws them again: the stop is back in its old zone's polygon.
    const v3 = await session.undo(PLAN);
    expect(v3.boundariesPending).toBe(true);
    expect(v3.boundariesVersion).toBe(v2.version);
    const v4 = await settled();
    expect(v4.boundariesVersion).toBe(v3.version);
    expect(zonesHolding(v4, stop)).toEqual([from]);
    // Asked for again, the same state is not drawn again.
    const n = workers.length;
    expect((await session.plan(PLAN)).boundariesVersion).toBe(v3.version);
    expect(workers.length).toBe(n);
  });

  it('draws only the newest state: quick edits stop the older drawings, and a late result of an older one is dropped', async () => {
    const first = await borderStop();
    const second = await borderStop(new Set([first.stop]));
    const count = workers.length;
    // The first drawing cannot be stopped and answers late, with polygons of its own.
    const late = { type: 'FeatureCollection', features: [], late: true };
    nextWorker = () => {
      const w = new Worker(`const { parentPort } = require('node:worker_threads'); setTimeout(() => parentPort.postMessage({ type: 'done', value: { geojson: ${JSON.stringify(late)}, notes: ['late'] } }), 1500);`, { eval: true });
      w.terminate = async () => 0;
      return w;
    };
    const a = await session.edit(PLAN, { kind: 'move', stop: first.stop, zone: first.to });
    const b = await session.edit(PLAN, { kind: 'lock', stop: 0 });
    const c = await session.edit(PLAN, { kind: 'move', stop: second.stop, zone: second.to });
    for (const v of [a, b, c]) expect(v.boundariesPending).toBe(true);
    expect(c.version).toBeGreaterThan(b.version);
    expect(b.version).toBeGreaterThan(a.version);
    expect(workers.length).toBe(count + 3);
    // The middle drawing was stopped before it answered.
    await new Promise((res) => setTimeout(res, 100));
    expect(workers[count + 1]!.exited).toBe(true);
    expect(workers[count + 1]!.posted).toEqual([]);

    const done = await settled();
    expect(done.boundariesVersion).toBe(c.version);
    expect(zonesHolding(done, first.stop)).toEqual([first.to]);
    expect(zonesHolding(done, second.stop)).toEqual([second.to]);
    // The late answer of the first drawing comes, and changes nothing.
    for (let t = 0; t < 100 && workers[count]!.posted.length === 0; t++) await new Promise((res) => setTimeout(res, 50));
    expect(workers[count]!.posted).toHaveLength(1);
    await new Promise((res) => setTimeout(res, 50));
    const after = await session.plan(PLAN);
    expect(after.boundariesVersion).toBe(c.version);
    expect(after.boundaries).toEqual(done.boundaries);
    expect(after.notes).not.toContain('late');
    expect(workers.length).toBe(count + 3);
    // Nor does it stand in for the polygons while the next state is drawn.
    const d = await session.edit(PLAN, { kind: 'unlock', stop: 0 });
    expect(d.boundariesPending).toBe(true);
    expect(d.boundariesVersion).toBe(c.version);
    expect((d.boundaries as Zones).features).toEqual((done.boundaries as Zones).features);
    expect((await settled()).boundariesVersion).toBe(d.version);
  });

  it('keeps the polygons drawn before, with a note, when a drawing fails', async () => {
    const before = await settled();
    nextWorker = () => new Worker('process.exit(4)', { eval: true });
    const v = await session.edit(PLAN, { kind: 'lock', stop: 2 });
    expect(v.boundariesPending).toBe(true);
    const end = await settled();
    expect(end.boundariesVersion).toBe(before.boundariesVersion);
    expect(end.boundaries).toEqual({ ...(before.boundaries as object), zoneplan: { plan: PLAN, version: v.version, boundariesVersion: before.boundariesVersion, pending: false } });
    expect(end.notes.join(' ')).toMatch(/the zone polygons show an earlier state of the plan: redrawing them after the edits failed \(.*exit code 4\)/);
  });

  it('stops a drawing under way when the project is closed', async () => {
    nextWorker = null;
    await session.edit(PLAN, { kind: 'lock', stop: 1 });
    const w = workers[workers.length - 1]!;
    await session.openProject(session.projectFile!);
    await new Promise((res) => setTimeout(res, 100));
    expect(w.exited).toBe(true);
    // Opened again, the plan's polygons are drawn afresh for its edits.
    const v = await session.plan(PLAN);
    expect(v.boundariesPending).toBe(true);
    expect(v.boundariesVersion).toBe(0);
    expect((await settled()).boundariesVersion).toBe(v.version);
  });
});
