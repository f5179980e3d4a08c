/**
 * Large stops files are read and checked in a worker thread: the same stop set (ids, positions,
 * demand, warnings) and the same problem lists as an import on the session's own thread, from a
 * file, a file's bytes and its text; a crashed worker imports nothing and says so.
 */
import { writeFileSync } from 'node:fs';
import path from 'node:path';
import { Worker } from 'node:worker_threads';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { ImportOutcome, ImportSource } from '../../src/api/app-types.js';
import type { AppSession } from '../../src/api/session.js';
import { readStopsSource } from '../../src/api/text-import.js';
import { importWorker, startImportRead } from '../../src/run/import-run.js';
import type { ImportJob } from '../../src/run/import-worker.js';
import { emptySession, stopsCsv } from './helpers.js';

let inWorker: AppSession;
let here: AppSession;
let dir: string;
const started: ImportJob[] = [];

beforeAll(async () => {
  ({ session: inWorker, dir } = await emptySession({
    // Every source over 10 bytes is read in a worker here.
    importInWorkerOver: 10,
    importWorkerFactory: (job) => {
      started.push(job);
      return importWorker(job);
    },
  }));
  ({ session: here } = await emptySession({ importWorkerFactory: () => { throw new Error('no worker expected'); } }));
});

afterAll(async () => {
  await Promise.all([inWorker.close(), here.close()]);
});

/** The outcome without what differs between two projects (ids, times). */
function comparable(o: ImportOutcome): unknown {
  if (!o.ok) return o;
  const { id: _id, importedAt: _at, ...rest } = o.stopSet;
  return rest;
}

describe('AppSession: imports of large files in a worker thread', () => {
  // Windows-1252 bytes (a warning), a semicolon file, a CSV with a blank id and a bad latitude.
  const good = stopsCsv(5000, 3);
  const latin = Buffer.from('id;lat;lon;demand\nMüller;51.3;12.4;2\nS2;51.31;12.41;3\n', 'latin1');
  const bad = 'id,lat,lon,demand\nS1,51.3,12.4,2\n,51.2,12.3,1\nS3,95,12.3,1\n';
  const cases: [string, (d: string) => ImportSource][] = [
    ['text', () => ({ name: 'good.csv', text: good })],
    ['bytes', () => ({ name: 'latin.csv', base64: latin.toString('base64') })],
    [
      'a file',
      (d) => {
        const f = path.join(d, 'good.csv');
        writeFileSync(f, good);
        return { file: f };
      },
    ],
    ['text with errors', () => ({ name: 'bad.csv', text: bad })],
    [
      'a file with errors',
      (d) => {
        const f = path.join(d, 'bad.csv');
        writeFileSync(f, bad);
        return { file: f };
      },
    ],
  ];
  for (const [what, make] of cases) {
    it(`gives what the session's own thread gives: ${what}`, async () => {
      started.length = 0;
      const source = make(dir);
      const a = await inWorker.importStops(source);
      const b = await here.importStops(source);
      expect(started).toHaveLength(1);
      expect(comparable(a)).toEqual(comparable(b));
      if (what.endsWith('with errors')) {
        expect(a.ok).toBe(false);
        if (!a.ok) expect(a.problems.map((p) => p.row)).toEqual(expect.arrayContaining([3, 4]));
      }
      if (what === 'bytes') expect(a.ok && a.stopSet.warnings.length).toBeGreaterThan(0);
    });
  }

  it('the worker reads the same stops as this thread: ids, positions, demand and warnings', async () => {
    for (const source of [{ name: 'good.csv', text: good }, { name: 'latin.csv', base64: latin.toString('base64') }] as ImportSource[]) {
      const o = await startImportRead({ source, options: {} }).outcome;
      expect(o.state).toBe('done');
      if (o.state !== 'done' || !o.value.ok) throw new Error('the worker did not read the stops');
      const w = o.value.stops;
      const h = readStopsSource(source);
      expect(w.ids).toEqual(h.ids);
      expect(Array.from(w.lonLat)).toEqual(Array.from(h.lonLat));
      expect(Array.from(w.demand)).toEqual(Array.from(h.demand));
      expect(Array.from(w.units)).toEqual(Array.from(h.units));
      expect(w.warnings).toEqual(h.warnings);
    }
  });

  it('reads a missing file on its own thread (nothing to read): no such file', async () => {
    started.length = 0;
    const a = await inWorker.importStops({ file: path.join(dir, 'missing.csv') });
    expect(started).toHaveLength(0);
    expect(a.ok ? '' : a.problems[0]!.message).toMatch(/no such file/);
  });

  it('imports nothing when the worker thread dies, and says so', async () => {
    const { session: s2 } = await emptySession({ importInWorkerOver: 10, importWorkerFactory: () => new Worker('process.exit(5)', { eval: true }) });
    try {
      await expect(s2.importStops({ name: 'good.csv', text: good })).rejects.toMatchObject({ kind: 'internal', message: expect.stringMatching(/the import stopped unexpectedly \(exit code 5\)/) });
      expect((await s2.project()).stopSets).toEqual([]);
    } finally {
      await s2.close();
    }
  });
});
