/**
 * Exports of large plans run in a worker thread: the same bytes as an export on the session's own
 * thread (the plan as edited), files written whole, the thread kept free, and a crashed worker
 * reported with a message and no file.
 */
import { existsSync, readFileSync } from 'node:fs';
import path from 'node:path';
import { Worker } from 'node:worker_threads';
import * as GJV from 'geojson-validation';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { ExportRequest } from '../../src/api/app-types.js';
import { solveStops } from '../../src/api/plan-file.js';
import { savePlanToProject } from '../../src/api/project.js';
import { AppSession } from '../../src/api/session.js';
import { readStopsText } from '../../src/api/text-import.js';
import { exportWorker } from '../../src/run/export-run.js';
import type { ExportJob } from '../../src/run/export-worker.js';
import { emptySession, stopsCsv, watchThread } from './helpers.js';

const N = 20_000;
let session: AppSession;
let file: string;
let dir: string;
const started: ExportJob[] = [];
const KINDS: readonly ExportRequest['kind'][] = ['plan', 'zones', 'centres', 'stops', 'assignments'];
/** Each kind's text as exported through the worker. */
const viaWorker = new Map<string, string>();
/** The zone stop S1 was moved to by hand. */
let movedTo = -1;

beforeAll(async () => {
  ({ session, file, dir } = await emptySession({
    // Every plan over 1,000 stops is exported in a worker here.
    redrawBoundariesUpTo: 1000,
    exportWorkerFactory: (job) => {
      started.push(job);
      return exportWorker(job);
    },
  }));
  expect((await session.importStops({ name: 'a.csv', text: stopsCsv(N) })).ok).toBe(true);
  await savePlanToProject(file, await solveStops(readStopsText('a.csv', stopsCsv(N)), { zones: 8, seed: 2, threads: 1 }), 'p');
  // An edit: the export must show the plan as edited.
  const d = await session.stop('p', 0);
  movedTo = (await session.plan('p')).zones.find((z) => z.zone !== d.zone)!.zone;
  await session.edit('p', { kind: 'move', stop: 0, zone: movedTo });
}, 60_000);

afterAll(async () => {
  await session.close();
});

describe('AppSession: exports of large plans in a worker thread', () => {
  it('exports every kind through the worker, keeping the thread free; the GeoJSON validates (geojson-validation)', async () => {
    started.length = 0;
    const watch = watchThread();
    try {
      for (const kind of KINDS) {
        const r = await session.exportPlan({ plan: 'p', kind, file: null });
        expect(r.file).toBeNull();
        expect(r.bytes).toBe(Buffer.byteLength(r.content!));
        viaWorker.set(kind, r.content!);
      }
    } finally {
      watch.stop();
    }
    expect(started.map((j) => j.kind)).toEqual(KINDS);
    expect(started.every((j) => j.plan.stops.ids.length === N)).toBe(true);
    expect(watch.longestGapMs).toBeLessThan(1000);
    for (const kind of ['plan', 'zones', 'centres', 'stops']) expect(GJV.valid(JSON.parse(viaWorker.get(kind)!)), kind).toBe(true);
    // The moved stop is in its new zone in the assignments.
    const [header, first] = viaWorker.get('assignments')!.split(/\r?\n/);
    const cols = header!.split(',');
    const row = first!.split(',');
    expect(row[0]).toBe('S1');
    expect(Number(row[cols.indexOf('zone')])).toBe(movedTo);
  });

  it('writes a file whole through the worker, the same bytes as the text', async () => {
    const target = path.join(dir, 'zones.geojson');
    const r = await session.exportPlan({ plan: 'p', kind: 'zones', file: target });
    expect(r).toEqual({ file: target, content: null, bytes: Buffer.byteLength(viaWorker.get('zones')!) });
    expect(readFileSync(target, 'utf8')).toBe(viaWorker.get('zones'));
  });

  it('gives the same bytes as an export on the session\'s own thread', async () => {
    await session.close();
    const here = new AppSession({ mode: 'browser', exportWorkerFactory: () => { throw new Error('no worker expected'); } });
    await here.open(file);
    try {
      for (const kind of KINDS) expect((await here.exportPlan({ plan: 'p', kind, file: null })).content, kind).toBe(viaWorker.get(kind));
    } finally {
      await here.close();
      await session.open(file);
    }
  });

  it('reports a crashed worker with a message and writes nothing', async () => {
    const { session: s2, file: f2, dir: d2 } = await emptySession({ redrawBoundariesUpTo: 10, exportWorkerFactory: () => new Worker('process.exit(4)', { eval: true }) });
    try {
      expect((await s2.importStops({ name: 'a.csv', text: stopsCsv(300) })).ok).toBe(true);
      await savePlanToProject(f2, await solveStops(readStopsText('a.csv', stopsCsv(300)), { zones: 3, seed: 1, threads: 1 }), 'q');
      const target = path.join(d2, 'out.geojson');
      await expect(s2.exportPlan({ plan: 'q', kind: 'plan', file: target })).rejects.toMatchObject({ kind: 'internal', message: expect.stringMatching(/the export stopped unexpectedly \(exit code 4\)/) });
      expect(existsSync(target)).toBe(false);
    } finally {
      await s2.close();
    }
  });
});
