/**
 * The window's sweep runs in a worker thread: the session's thread stays free (timers fire, other
 * calls answer), rows arrive one by one as each number of zones is done, and Cancel ends it at
 * once with the whole rows done before and nothing saved.
 */
import { Worker } from 'node:worker_threads';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { SweepStatus } from '../../src/api/app-types.js';
import type { AppSession } from '../../src/api/session.js';
import { sweepStops } from '../../src/api/sweep.js';
import { readStopsText } from '../../src/api/text-import.js';
import { sweepWorker } from '../../src/run/sweep-run.js';
import type { SweepJob } from '../../src/run/sweep-worker.js';
import { emptySession, stopsCsv, watchThread } from './helpers.js';

let session: AppSession;
/** Sweep workers started by the session. */
const started: SweepJob[] = [];

beforeAll(async () => {
  ({ session } = await emptySession({
    sweepWorkerFactory: (job) => {
      started.push(job);
      return sweepWorker(job);
    },
  }));
  const r = await session.importStops({ name: 'leipzig.csv', text: stopsCsv(20_000) });
  expect(r.ok).toBe(true);
});

afterAll(async () => {
  await session.close();
});

describe('AppSession: the sweep runs in a worker thread', () => {
  it('keeps the thread free and gives the rows one by one, the same as a sweep on this thread', async () => {
    started.length = 0;
    const seen: SweepStatus[] = [];
    // Timer ticks while the sweep runs: the longest time between two is how long the thread was held.
    const watch = watchThread();
    /** The timer's ticks when each row arrived. */
    const ticksAtRows: number[] = [];
    try {
      const s = await session.startSweep(1, 6, 10, { seed: 1, restarts: 4 }, (st) => {
        if (st.rows.length > ticksAtRows.length) ticksAtRows.push(watch.ticks);
        seen.push(st);
      });
      expect(s.state).toBe('running');
      expect(s.rows).toEqual([]);
      // Another call answers while the sweep is under way.
      const info = await session.project();
      expect(info.stopSets[0]!.stops).toBe(20_000);
      expect((await session.sweepStatus(s.id)).state).toBe('running');
      const end = await session.waitForSweep(s.id);
      expect(end.state).toBe('done');
      expect(end.fraction).toBe(1);
      expect(end.message).toBeNull();
      expect(end.rows.map((r) => r.zones)).toEqual([6, 7, 8, 9, 10]);
    } finally {
      watch.stop();
    }
    expect(started).toHaveLength(1);
    expect(watch.longestGapMs).toBeLessThan(1000);
    // One row more at a time, in order, each while the sweep was still running but the last.
    const counts = seen.map((st) => st.rows.length);
    for (let i = 1; i < counts.length; i++) expect([0, 1]).toContain(counts[i]! - counts[i - 1]!);
    expect(counts[counts.length - 1]).toBe(5);
    for (const st of seen.filter((x) => x.rows.length < 5)) expect(st.state).toBe('running');
    expect(seen.find((st) => st.rows.length === 1)!.rows[0]!.zones).toBe(6);
    // The timer kept firing between rows.
    expect(ticksAtRows).toHaveLength(5);
    for (let i = 1; i < ticksAtRows.length; i++) expect(ticksAtRows[i]!).toBeGreaterThan(ticksAtRows[i - 1]!);
    // Fractions never go back.
    const fractions = seen.map((st) => st.fraction);
    for (let i = 1; i < fractions.length; i++) expect(fractions[i]!).toBeGreaterThanOrEqual(fractions[i - 1]!);

    // The same rows as the sweep on this thread (the CLI's), but for the time each took.
    const stops = readStopsText('leipzig.csv', stopsCsv(20_000));
    const here = await sweepStops(stops, { seed: 1, restarts: 4, threads: 1 }, { from: 6, to: 10 });
    const bare = (rows: readonly { ms: number }[]) => rows.map(({ ms: _ms, ...r }) => r);
    expect(bare(seen[seen.length - 1]!.rows)).toEqual(bare(here));
  });

  it('cancels within a second: state cancelled, the whole rows done before kept, no more after', async () => {
    const before = await session.project();
    const s = await session.startSweep(1, 30, 60, { seed: 2, restarts: 20 });
    // Wait for the first row, then cancel in the middle of the next.
    for (let t = 0; t < 1200; t++) {
      if ((await session.sweepStatus(s.id)).rows.length > 0) break;
      await new Promise((res) => setTimeout(res, 50));
    }
    const mid = await session.sweepStatus(s.id);
    expect(mid.state).toBe('running');
    expect(mid.rows.length).toBeGreaterThan(0);
    const t0 = performance.now();
    const end = await session.cancelSweep(s.id);
    const ms = performance.now() - t0;
    expect(end.state).toBe('cancelled');
    expect(ms).toBeLessThan(1000);
    expect(end.message).toMatch(new RegExp(`cancelled after ${end.rows.length} of 31 zone counts; nothing was saved`));
    expect(end.rows.length).toBeLessThan(31);
    expect(end.rows.map((r) => r.zones)).toEqual(Array.from({ length: end.rows.length }, (_, i) => 30 + i));
    for (const r of end.rows) expect(Number.isFinite(r.objectiveKm2)).toBe(true);
    // A while later nothing more has come, and nothing was saved.
    await new Promise((res) => setTimeout(res, 300));
    const later = await session.sweepStatus(s.id);
    expect(later.state).toBe('cancelled');
    expect(later.rows).toEqual(end.rows);
    expect((await session.project()).plans).toEqual(before.plans);
    // Cancelling again changes nothing.
    expect((await session.cancelSweep(s.id)).rows).toEqual(end.rows);
  });

  it('answers the Api sweep with the rows, and ends one whose window is closed as cancelled', async () => {
    const rows = await session.sweep(1, 3, 4, { seed: 1, restarts: 1 });
    expect(rows.map((r) => r.zones)).toEqual([3, 4]);
    const { session: other } = await emptySession();
    await other.importStops({ name: 'a.csv', text: stopsCsv(20_000) });
    const pending = other.sweep(1, 30, 60, { seed: 2, restarts: 20 });
    const caught = pending.catch((e: unknown) => e);
    await new Promise((res) => setTimeout(res, 300));
    await other.close();
    const err = await caught;
    expect(err).toMatchObject({ kind: 'cancelled' });
    expect((err as Error).message).toMatch(/^the sweep was cancelled after \d+ of 31 zone counts; nothing was saved$/);
  });

  it('reports a crashed sweep worker as failed and keeps working', async () => {
    const { session: s2 } = await emptySession({ sweepWorkerFactory: () => new Worker('setTimeout(() => { throw new Error("the thread fell over"); }, 50)', { eval: true }) });
    try {
      await s2.importStops({ name: 'a.csv', text: stopsCsv(50) });
      const s = await s2.startSweep(1, 2, 3, {});
      const end = await s2.waitForSweep(s.id);
      expect(end.state).toBe('failed');
      expect(end.message).toMatch(/the sweep stopped with an error: the thread fell over/);
      await expect(s2.sweep(1, 2, 3, {})).rejects.toThrow(/the thread fell over/);
      expect((await s2.project()).stopSets).toHaveLength(1);
    } finally {
      await s2.close();
    }
  });

  it('refuses a bad depots file before any sweep starts, with its row and field', async () => {
    const n = started.length;
    const depots = { name: 'hubs.csv', text: 'id,lat,lon\nA,51.4,12.5\nB,95,12.1\n' };
    const err = await session.startSweep(1, 3, 4, { depots }).catch((e: unknown) => e);
    expect((err as { problems?: { row?: number; field?: string }[] }).problems?.[0]).toMatchObject({ row: 3, field: 'lat' });
    expect(started.length).toBe(n);
  });
});
