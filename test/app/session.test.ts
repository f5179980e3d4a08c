import { existsSync, readFileSync } from 'node:fs';
import path from 'node:path';
import { Worker } from 'node:worker_threads';
import * as GJV from 'geojson-validation';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { ImportError } from '../../src/io/problems.js';
import type { PlanView } from '../../src/api/app-types.js';
import { solveStops } from '../../src/api/plan-file.js';
import { listEdits, savePlanToProject } from '../../src/api/project.js';
import type { AppSession } from '../../src/api/session.js';
import { readStopsText } from '../../src/api/text-import.js';
import { planWorker } from '../../src/run/plan-run.js';
import type { PlanWorkerMessage } from '../../src/run/plan-worker.js';
import { emptySession, stopsCsv } from './helpers.js';

const DEMO_CSV = path.resolve('demo-data/tallowmere-stops.csv');

let session: AppSession;
let file: string;
let dir: string;
/** Messages the plan workers posted (progress and the end). */
const posted: PlanWorkerMessage[] = [];

beforeAll(async () => {
  ({ session, file, dir } = await emptySession({
    workerFactory: (job) => {
      const w = planWorker(job);
      w.on('message', (m: PlanWorkerMessage) => posted.push(m));
      return w;
    },
  }));
});

afterAll(async () => {
  await session.close();
});

/** A plan of `zones` zones saved straight into the project (no worker: quick). */
async function savedPlan(stopSetId: number, name: string, zones: number): Promise<void> {
  const info = await session.project();
  const set = info.stopSets.find((s) => s.id === stopSetId)!;
  expect(set).toBeDefined();
  const stops = readStopsText('stops.csv', stopsCsv(set.stops));
  const solved = await solveStops(stops, { zones, seed: 3, threads: 1 });
  await savePlanToProject(file, solved, name);
}

function zoneOf(view: PlanView, label: number): { stops: number; demand: number } {
  const z = view.zones.find((r) => r.zone === label)!;
  return { stops: z.stops, demand: z.demand };
}

describe('AppSession: import', () => {
  it('imports good CSV text as a new stop set with its totals', async () => {
    const r = await session.importStops({ name: 'leipzig.csv', text: stopsCsv(300) });
    expect(r.ok).toBe(true);
    if (!r.ok) return;
    expect(r.stopSet.id).toBe(1);
    expect(r.stopSet.stops).toBe(300);
    expect(r.stopSet.source).toBe('leipzig.csv');
    const csvDemand = stopsCsv(300).trim().split('\n').slice(1).reduce((a, l) => a + Number(l.split(',')[3]), 0);
    expect(r.stopSet.totalDemand).toBe(csvDemand);
    expect(r.stopSet.bbox[0]).toBeGreaterThan(11.9);
    expect(r.stopSet.bbox[2]).toBeLessThan(13);
  });

  it('imports nothing from bad text and lists the problems with their rows', async () => {
    const before = (await session.project()).stopSets.length;
    const text = 'id,lat,lon,demand\nA,51.3,12.3,1\nB,95,12.3,1\nC,51.3,east,2\n';
    const r = await session.importStops({ name: 'bad.csv', text });
    expect(r.ok).toBe(false);
    if (r.ok) return;
    expect(r.file).toBe('bad.csv');
    expect(r.errorCount).toBe(2);
    expect(r.problems.map((p) => p.row)).toEqual([3, 4]);
    expect(r.problems.map((p) => p.field)).toEqual(['lat', 'lon']);
    expect((await session.project()).stopSets.length).toBe(before);
  });

  it('imports from a file path on the main side', async () => {
    const r = await session.importStops({ file: DEMO_CSV }, { demand: 'parcels' });
    expect(r.ok).toBe(true);
    if (r.ok) expect(r.stopSet.stops).toBe(readFileSync(DEMO_CSV, 'utf8').trim().split('\n').length - 1);
  });
});

describe('AppSession: plan runs in a worker thread', () => {
  it('runs to done with progress and saves the plan with its boundaries', async () => {
    posted.length = 0;
    const started = await session.startRun(1, { zones: 4, seed: 5 }, 'four zones');
    expect(started.state).toBe('running');
    const done = await session.waitForRun(started.id);
    expect(done.state).toBe('done');
    expect(done.fraction).toBe(1);
    const progress = posted.filter((m): m is Extract<PlanWorkerMessage, { type: 'progress' }> => m.type === 'progress');
    expect(progress.length).toBeGreaterThan(2);
    const fractions = progress.map((p) => p.fraction);
    expect(Math.max(...fractions)).toBeGreaterThan(0.9);
    expect(fractions.every((f) => f >= 0 && f <= 1)).toBe(true);
    expect(new Set(progress.map((p) => p.phase)).has('boundaries')).toBe(true);
    const plans = (await session.project()).plans.map((p) => p.name);
    expect(plans).toContain('four zones');
    const view = await session.plan('four zones');
    expect(view.zones).toHaveLength(4);
    expect(view.zones.reduce((a, z) => a + z.stops, 0)).toBe(300);
    expect((view.boundaries as { features: unknown[] }).features).toHaveLength(4);
    expect(view.distanceNote).toMatch(/great-circle/);
    expect(view.distanceNote).toMatch(/not .*drive times/);
    expect(view.distanceNote).toMatch(/labour rules/);
  });

  it('refuses a run whose plan name is taken, before solving', async () => {
    await expect(session.startRun(1, { zones: 3 }, 'four zones')).rejects.toThrow(/four zones/);
  });

  it('takes fixed depots from a file chosen in the window: their zones keep their centres there', async () => {
    const depots = { name: 'depots.csv', text: 'id,lat,lon\nNorth hub,51.45,12.55\nSouth hub,51.22,12.15\n' };
    const r = await session.startRun(1, { zones: 4, seed: 5, depots }, 'with depots');
    expect((await session.waitForRun(r.id)).state).toBe('done');
    const view = await session.plan('with depots');
    expect(view.zones.map((z) => z.fixed)).toEqual([true, true, false, false]);
    expect(view.zones[0]!.centre[0]).toBeCloseTo(12.55, 9);
    expect(view.zones[0]!.centre[1]).toBeCloseTo(51.45, 9);
    expect(view.zones[1]!.centre[0]).toBeCloseTo(12.15, 9);
    expect(view.zones[1]!.centre[1]).toBeCloseTo(51.22, 9);
    // A depot of the run can be freed where it is, and undo makes it a depot again.
    const freed = await session.edit('with depots', { kind: 'unpin-centre', zone: view.zones[0]!.zone });
    expect(freed.zones.map((z) => z.fixed)).toEqual([false, true, false, false]);
    expect(freed.zones[0]!.centre).toEqual(view.zones[0]!.centre);
    const undone = await session.undo('with depots');
    expect(undone.zones.map((z) => z.fixed)).toEqual([true, true, false, false]);
    expect(undone.zones[0]!.centre[0]).toBeCloseTo(12.55, 9);
    expect(undone.zones[0]!.centre[1]).toBeCloseTo(51.45, 9);
  });

  it('refuses a bad depots file before any run, naming the file as chosen, its row and field', async () => {
    const before = await session.project();
    const depots = { name: 'hubs.csv', text: 'id,lat,lon\nA,51.4,12.5\nB,95,12.1\n' };
    const err = await session.startRun(1, { zones: 4, depots }, 'bad depots').catch((e: unknown) => e);
    expect(err).toBeInstanceOf(ImportError);
    const problems = (err as ImportError).problems;
    expect(problems[0]).toMatchObject({ file: 'hubs.csv', row: 3, field: 'lat' });
    expect((err as ImportError).message).not.toMatch(/zoneplan-depots-/);
    expect((await session.project()).plans).toEqual(before.plans);
  });

  it('cancels a long run within a second and leaves the saved plans as they were', async () => {
    const before = await session.project();
    const r = await session.startRun(2, { zones: 60, restarts: 400, seed: 1 }, 'long run');
    // Wait until the worker is solving (its first progress), then cancel.
    for (let t = 0; t < 600; t++) {
      const s = await session.runStatus(r.id);
      if (s.state !== 'running' || s.phase !== 'start') break;
      await new Promise((res) => setTimeout(res, 50));
    }
    expect((await session.runStatus(r.id)).state).toBe('running');
    const t0 = performance.now();
    const s = await session.cancelRun(r.id);
    const ms = performance.now() - t0;
    expect(s.state).toBe('cancelled');
    expect(ms).toBeLessThan(1000);
    // A while later it is still cancelled, and nothing was saved.
    await new Promise((res) => setTimeout(res, 200));
    expect((await session.runStatus(r.id)).state).toBe('cancelled');
    const after = await session.project();
    expect(after.plans).toEqual(before.plans);
  });

  it('reports a crashed worker as failed and keeps working', async () => {
    const { session: s2, file: f2 } = await emptySession({
      // Crashes once it has started, as a fault in the middle of a solve would.
      workerFactory: () => new Worker('setTimeout(() => { throw new Error("the thread fell over"); }, 50)', { eval: true }),
    });
    try {
      await s2.importStops({ name: 'a.csv', text: stopsCsv(50) });
      await savePlanToProject(f2, await solveStops(readStopsText('a.csv', stopsCsv(50)), { zones: 2, seed: 1, threads: 1 }), 'kept');
      const before = await s2.plan('kept');
      const r = await s2.startRun(1, { zones: 3 }, 'crash');
      const end = await s2.waitForRun(r.id);
      expect(end.state).toBe('failed');
      expect(end.message).toMatch(/the thread fell over/);
      expect((await s2.project()).plans.map((p) => p.name)).toEqual(['kept']);
      expect((await s2.plan('kept')).zones).toEqual(before.zones);
      const again = await s2.importStops({ name: 'b.csv', text: stopsCsv(20) });
      expect(again.ok).toBe(true);
    } finally {
      await s2.close();
    }
  });

  it('reports a worker that exits early as failed', async () => {
    const { session: s3 } = await emptySession({ workerFactory: () => new Worker('process.exit(3)', { eval: true }) });
    try {
      await s3.importStops({ name: 'a.csv', text: stopsCsv(50) });
      const end = await s3.waitForRun((await s3.startRun(1, { zones: 3 }, 'x')).id);
      expect(end.state).toBe('failed');
      expect(end.message).toMatch(/exit code 3/);
    } finally {
      await s3.close();
    }
  });
});

describe('AppSession: manual edits, undo and redo', () => {
  beforeAll(async () => {
    await savedPlan(1, 'edit me', 5);
  });

  it('moves a stop: its zones change at once and the edit is in the project', async () => {
    const v0 = await session.plan('edit me');
    expect(v0.canUndo).toBe(false);
    const s0 = await session.stop('edit me', 0);
    const to = v0.zones.map((z) => z.zone).find((z) => z !== s0.zone)!;
    const from0 = zoneOf(v0, s0.zone);
    const to0 = zoneOf(v0, to);
    const v1 = await session.edit('edit me', { kind: 'move', stop: 0, zone: to });
    expect(zoneOf(v1, s0.zone)).toEqual({ stops: from0.stops - 1, demand: from0.demand - s0.demand });
    expect(zoneOf(v1, to)).toEqual({ stops: to0.stops + 1, demand: to0.demand + s0.demand });
    expect(v1.info.edits).toBe(1);
    expect(v1.canUndo).toBe(true);
    expect((await session.stop('edit me', 0)).zone).toBe(to);
    const arrays = await session.planArrays('edit me');
    expect(new Int16Array(arrays.buffer, arrays.zoneOffset, arrays.count)[0]).toBe(v1.zones.findIndex((z) => z.zone === to));
    const log = await listEdits(file, 'edit me');
    expect(log.map((e) => [e.kind, e.stopIndex, e.fromZone, e.toZone])).toEqual([['move', 0, s0.zone, to]]);

    const v2 = await session.undo('edit me');
    expect(zoneOf(v2, s0.zone)).toEqual(from0);
    expect(zoneOf(v2, to)).toEqual(to0);
    expect(v2.canUndo).toBe(false);
    expect(v2.canRedo).toBe(true);
    expect((await session.stop('edit me', 0)).zone).toBe(s0.zone);
    // Undo is itself recorded: a move back.
    const log2 = await listEdits(file, 'edit me');
    expect(log2.map((e) => [e.kind, e.stopIndex, e.toZone])).toEqual([
      ['move', 0, to],
      ['move', 0, s0.zone],
    ]);

    const v3 = await session.redo('edit me');
    expect(zoneOf(v3, to)).toEqual({ stops: to0.stops + 1, demand: to0.demand + s0.demand });
    expect(v3.canRedo).toBe(false);
    expect((await listEdits(file, 'edit me')).length).toBe(3);
  });

  it('survives a reopen: the edits come from the project', async () => {
    const before = await session.plan('edit me');
    await session.openProject(file);
    const after = await session.plan('edit me');
    expect(after.zones).toEqual(before.zones);
    expect(after.info.edits).toBe(3);
    expect(after.canUndo).toBe(false); // the undo history is the window's, not the file's
  });

  it('locks and unlocks a stop, with undo', async () => {
    const locked = (a: Awaited<ReturnType<AppSession['planArrays']>>, i: number): number => new Uint8Array(a.buffer, a.lockedOffset, a.count)[i]!;
    await session.edit('edit me', { kind: 'lock', stop: 7 });
    expect((await session.stop('edit me', 7)).locked).toBe(true);
    expect(locked(await session.planArrays('edit me'), 7)).toBe(1);
    await session.undo('edit me');
    expect((await session.stop('edit me', 7)).locked).toBe(false);
    expect(locked(await session.planArrays('edit me'), 7)).toBe(0);
  });

  it('pins a zone centre as a fixed depot; undo frees it where it was, redo pins it again', async () => {
    const v0 = await session.plan('edit me');
    const z = v0.zones[1]!;
    expect(z.fixed).toBe(false);
    const logged = (await listEdits(file, 'edit me')).length;
    const v1 = await session.edit('edit me', { kind: 'pin-centre', zone: z.zone, lon: 12.5, lat: 51.4 });
    const z1 = v1.zones[1]!;
    expect(z1.centre[0]).toBeCloseTo(12.5, 9);
    expect(z1.centre[1]).toBeCloseTo(51.4, 9);
    expect(z1.fixed).toBe(true);
    expect(z1.meanKm).not.toBeCloseTo(z.meanKm, 6);
    expect(v1.objectiveKm2).not.toBeCloseTo(v0.objectiveKm2, 3);

    const v2 = await session.undo('edit me');
    const z2 = v2.zones[1]!;
    expect(z2.fixed).toBe(false);
    expect(z2.centre[0]).toBeCloseTo(z.centre[0], 9);
    expect(z2.centre[1]).toBeCloseTo(z.centre[1], 9);
    // The figures are those of the centre where it was again.
    expect(z2.meanKm).toBeCloseTo(z.meanKm, 9);
    expect(z2.maxKm).toBeCloseTo(z.maxKm, 9);
    expect(z2.objectiveKm2).toBeCloseTo(z.objectiveKm2, 6);
    expect(v2.objectiveKm2).toBeCloseTo(v0.objectiveKm2, 6);
    expect(v2.canRedo).toBe(true);
    // The other zones were never touched.
    expect(v2.zones.filter((_, j) => j !== 1).map((r) => [r.fixed, r.centre])).toEqual(v0.zones.filter((_, j) => j !== 1).map((r) => [r.fixed, r.centre]));
    // Both are in the project: the pin, and the unpin that takes it back (to the old position).
    const log = (await listEdits(file, 'edit me')).slice(logged);
    expect(log.map((e) => [e.kind, e.stopIndex, e.toZone])).toEqual([
      ['pin-centre', null, z.zone],
      ['unpin-centre', null, z.zone],
    ]);
    expect(log[0]!.centre).toEqual([12.5, 51.4]);
    expect(log[1]!.centre![0]).toBeCloseTo(z.centre[0], 9);
    expect(log[1]!.centre![1]).toBeCloseTo(z.centre[1], 9);

    const v3 = await session.redo('edit me');
    expect(v3.zones[1]!.fixed).toBe(true);
    expect(v3.zones[1]!.centre[0]).toBeCloseTo(12.5, 9);
    expect(v3.zones[1]!.centre[1]).toBeCloseTo(51.4, 9);
    expect(v3.zones[1]!.meanKm).toBeCloseTo(z1.meanKm, 9);
    expect((await listEdits(file, 'edit me')).slice(logged).map((e) => e.kind)).toEqual(['pin-centre', 'unpin-centre', 'pin-centre']);
    // Reopened, the project gives the same: pinned at 12.5, 51.4.
    await session.openProject(file);
    const again = (await session.plan('edit me')).zones[1]!;
    expect(again.fixed).toBe(true);
    expect(again.centre[0]).toBeCloseTo(12.5, 9);

    // Back to the state before this test (the undo history was the window's, so by hand).
    const v4 = await session.edit('edit me', { kind: 'unpin-centre', zone: z.zone, lon: z.centre[0], lat: z.centre[1] });
    expect(v4.zones[1]!.fixed).toBe(false);
    expect(v4.zones[1]!.meanKm).toBeCloseTo(z.meanKm, 9);
    // ...and the pin once more, then undone, for the redo of the next test.
    await session.edit('edit me', { kind: 'pin-centre', zone: z.zone, lon: 12.5, lat: 51.4 });
    expect((await session.undo('edit me')).zones[1]!.fixed).toBe(false);
  });

  it('refuses an edit that does not fit the plan, recording nothing', async () => {
    const n = (await listEdits(file, 'edit me')).length;
    await expect(session.edit('edit me', { kind: 'move', stop: 0, zone: 99 })).rejects.toThrow(/no zone 99/);
    await expect(session.edit('edit me', { kind: 'move', stop: 5000, zone: 1 })).rejects.toThrow(/index 0\.\.299/);
    expect((await listEdits(file, 'edit me')).length).toBe(n);
    // The pin undone above can still be redone; after that there is nothing more to redo.
    expect((await session.redo('edit me')).zones[1]!.centre[0]).toBeCloseTo(12.5, 9);
    await expect(session.redo('edit me')).rejects.toThrow(/nothing to redo/);
  });

  it('unpins a pinned centre where it is; undo pins it there again, redo frees it again', async () => {
    const v0 = await session.plan('edit me');
    const z = v0.zones[1]!;
    expect(z.fixed).toBe(true);
    const logged = (await listEdits(file, 'edit me')).length;
    const v1 = await session.edit('edit me', { kind: 'unpin-centre', zone: z.zone });
    expect(v1.zones[1]!.fixed).toBe(false);
    expect(v1.zones[1]!.centre).toEqual(z.centre);
    expect(v1.zones[1]!.meanKm).toBeCloseTo(z.meanKm, 9);
    // A free centre cannot be unpinned: refused, nothing recorded, the history unchanged.
    await expect(session.edit('edit me', { kind: 'unpin-centre', zone: z.zone })).rejects.toThrow(/is not pinned/);
    expect((await listEdits(file, 'edit me')).length).toBe(logged + 1);

    const v2 = await session.undo('edit me');
    expect(v2.zones[1]!.fixed).toBe(true);
    expect(v2.zones[1]!.centre[0]).toBeCloseTo(z.centre[0], 9);
    expect(v2.zones[1]!.centre[1]).toBeCloseTo(z.centre[1], 9);
    const v3 = await session.redo('edit me');
    expect(v3.zones[1]!.fixed).toBe(false);
    expect(v3.zones[1]!.centre[0]).toBeCloseTo(z.centre[0], 9);
    const log = (await listEdits(file, 'edit me')).slice(logged);
    expect(log.map((e) => [e.kind, e.toZone, e.centre === null])).toEqual([
      ['unpin-centre', z.zone, true],
      ['pin-centre', z.zone, false],
      ['unpin-centre', z.zone, true],
    ]);
  });

  it('moves a pinned centre to a new place; undo puts it back, still pinned', async () => {
    const z = (await session.edit('edit me', { kind: 'pin-centre', zone: 3, lon: 12.3, lat: 51.3 })).zones.find((r) => r.zone === 3)!;
    expect(z.fixed).toBe(true);
    const v1 = await session.edit('edit me', { kind: 'pin-centre', zone: 3, lon: 12.7, lat: 51.2 });
    expect(v1.zones.find((r) => r.zone === 3)!.centre[0]).toBeCloseTo(12.7, 9);
    const v2 = await session.undo('edit me');
    const back = v2.zones.find((r) => r.zone === 3)!;
    expect(back.fixed).toBe(true);
    expect(back.centre[0]).toBeCloseTo(12.3, 9);
    expect(back.centre[1]).toBeCloseTo(51.3, 9);
    const v3 = await session.undo('edit me');
    expect(v3.zones.find((r) => r.zone === 3)!.fixed).toBe(false);
    expect((await listEdits(file, 'edit me')).slice(-2).map((e) => e.kind)).toEqual(['pin-centre', 'unpin-centre']);
  });
});

describe('AppSession: plan arrays, export, compare, rename, rebalance, sweep', () => {
  beforeAll(async () => {
    await savedPlan(1, 'base', 4);
  });

  it('gives the stops as aligned typed arrays in one buffer', async () => {
    const a = await session.planArrays('base');
    expect(a.count).toBe(300);
    for (const off of [a.lonLatOffset, a.demandOffset]) expect(off % 4).toBe(0);
    expect(a.zoneOffset % 2).toBe(0);
    expect(a.buffer.byteLength).toBeGreaterThanOrEqual(a.lockedOffset + a.count);
    const ll = new Float32Array(a.buffer, a.lonLatOffset, 2 * a.count);
    const first = stopsCsv(300).split('\n')[1]!.split(',');
    expect(ll[0]).toBeCloseTo(Number(first[2]), 4);
    expect(ll[1]).toBeCloseTo(Number(first[1]), 4);
    expect(new Float32Array(a.buffer, a.demandOffset, a.count)[0]).toBe(Number(first[3]));
    const zones = new Int16Array(a.buffer, a.zoneOffset, a.count);
    expect(Math.min(...zones)).toBe(0);
    expect(Math.max(...zones)).toBe(3);
    expect((await session.stopIds('base'))[0]).toBe('S1');
  });

  it('exports the plan as GeoJSON content that validates, and as a file', async () => {
    const r = await session.exportPlan({ plan: 'base', kind: 'plan', file: null });
    expect(r.file).toBeNull();
    const gj = JSON.parse(r.content!) as { type: string; features: { properties: { role: string } }[] };
    expect(GJV.isFeatureCollection(gj)).toBe(true);
    const roles = gj.features.map((f) => f.properties.role);
    expect(roles.filter((x) => x === 'zone')).toHaveLength(4);
    expect(roles.filter((x) => x === 'centre')).toHaveLength(4);
    expect(roles.filter((x) => x === 'stop')).toHaveLength(300);
    expect(r.bytes).toBe(Buffer.byteLength(r.content!));

    const csv = await session.exportPlan({ plan: 'base', kind: 'assignments', file: null });
    expect(csv.content!.split('\n')[0]).toMatch(/^stop_id,zone/);
    expect(csv.content!.trim().split('\n')).toHaveLength(301);

    const target = path.join(dir, 'out', '..', 'zones.geojson');
    const w = await session.exportPlan({ plan: 'base', kind: 'zones', file: target });
    expect(w.file).toBe(target);
    expect(existsSync(target)).toBe(true);
    const zones = JSON.parse(readFileSync(target, 'utf8')) as { features: unknown[] };
    expect(GJV.isFeatureCollection(zones)).toBe(true);
    expect(zones.features).toHaveLength(4);
    expect(w.bytes).toBe(readFileSync(target).length);
  });

  it('compares two plans and renames one', async () => {
    const same = await session.compare('base', 'base');
    expect(same.changedStops).toBe(0);
    expect(same.commonStops).toBe(300);
    const diff = await session.compare('base', 'edit me');
    expect(diff.zones.length).toBe(5);
    const info = await session.renamePlan('base', 'base v2');
    expect(info.plans.map((p) => p.name)).toContain('base v2');
    expect(info.plans.map((p) => p.name)).not.toContain('base');
    await expect(session.plan('base')).rejects.toThrow();
  });

  it('rebalances a plan onto a new stop set within a budget of moves', async () => {
    const text = stopsCsv(300).trim().split('\n');
    // 30 stops gone, the rest with double demand in the first cluster.
    const changed = [text[0]!, ...text.slice(31).map((l, i) => (i % 4 === 0 ? l.replace(/,(\d+)$/, (_m, d: string) => `,${Number(d) * 2}`) : l))].join('\n');
    const imp = await session.importStops({ name: 'week 2.csv', text: changed });
    expect(imp.ok).toBe(true);
    if (!imp.ok) return;
    const { view, report } = await session.rebalance('base v2', imp.stopSet.id, 'week 2', { stops: 20 });
    expect(view.info.parent).toBe('base v2');
    expect(view.info.stops).toBe(270);
    expect(report.removedStops).toBe(30);
    expect(report.moved).toBeLessThanOrEqual(20);
    expect((await session.project()).plans.map((p) => p.name)).toContain('week 2');
  });

  it('marks every stop of the plan shown that changed zone between two plans, matched by id', async () => {
    // 'base v2' (4 zones) against 'edit me' (5 zones) on the same 300 stops, shown on the first
    // and on 'week 2' (270 of those stops, in another stop set).
    const cmp = await session.compare('base v2', 'edit me');
    expect(cmp.changedStops).toBeGreaterThan(0);
    expect(cmp.changed.length).toBe(cmp.changedStops);
    const changedIds = new Set(cmp.changed.map((c) => c.id));
    for (const shown of ['base v2', 'week 2']) {
      const got = await session.changedStopFlags('base v2', 'edit me', shown);
      const flags = Buffer.from(got.flags, 'base64');
      const ids = await session.stopIds(shown);
      expect(flags.length).toBe(ids.length);
      const expected = ids.filter((id) => changedIds.has(id)).length;
      expect(got.marked).toBe(expected);
      if (shown === 'base v2') expect(expected).toBe(cmp.changedStops);
      else expect(expected).toBeLessThan(cmp.changedStops);
      ids.forEach((id, i) => expect(flags[i], `${shown}: ${id}`).toBe(changedIds.has(id) ? 1 : 0));
    }
    // A plan against itself marks nothing.
    expect((await session.changedStopFlags('week 2', 'week 2', 'base v2')).marked).toBe(0);
  });

  it('sweeps a range of zone counts', async () => {
    const rows = await session.sweep(1, 2, 4, { seed: 1, restarts: 1 });
    expect(rows.map((r) => r.zones)).toEqual([2, 3, 4]);
    expect(rows[2]!.objectiveKm2).toBeLessThan(rows[0]!.objectiveKm2);
  });
});
