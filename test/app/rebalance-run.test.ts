/**
 * The window's rebalance runs in a worker thread: the session's thread stays free (timers fire,
 * other calls answer), progress rises to the end, the plan saved is the one the rebalance gives
 * on this thread, and Cancel ends it at once with nothing saved.
 */
import path from 'node:path';
import { Worker } from 'node:worker_threads';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { RebalanceStatus } from '../../src/api/app-types.js';
import { solveStops, type SolvedPlan } from '../../src/api/plan-file.js';
import { createProject, savePlanToProject } from '../../src/api/project.js';
import { rebalancePlan } from '../../src/api/rebalance.js';
import type { AppSession } from '../../src/api/session.js';
import { readStopsText } from '../../src/api/text-import.js';
import type { StopSet } from '../../src/io/stopset.js';
import { rebalanceWorker } from '../../src/run/rebalance-run.js';
import type { RebalanceJob } from '../../src/run/rebalance-worker.js';
import { emptySession, stopsCsv, tempDir, watchThread } from './helpers.js';

const N = 20_000;
let session: AppSession;
let file: string;
let base: SolvedPlan;
/** The second week: every fifth stop's demand doubled, the last 500 stops gone. */
let week2: StopSet;
let week2Id: number;
/** Rebalance workers started by the session. */
const started: RebalanceJob[] = [];

function week2Csv(): string {
  const lines = stopsCsv(N).trim().split('\n');
  const kept = lines.slice(1, lines.length - 500).map((l, i) => (i % 5 === 0 ? l.replace(/,(\d+)$/, (_m, d: string) => `,${Number(d) * 2}`) : l));
  return [lines[0]!, ...kept].join('\n');
}

beforeAll(async () => {
  ({ session, file } = await emptySession({
    rebalanceWorkerFactory: (job) => {
      started.push(job);
      return rebalanceWorker(job);
    },
  }));
  expect((await session.importStops({ name: 'week 1.csv', text: stopsCsv(N) })).ok).toBe(true);
  base = await solveStops(readStopsText('week 1.csv', stopsCsv(N)), { zones: 12, balance: 0.05, seed: 5, threads: 1 });
  await savePlanToProject(file, base, 'week 1');
  const imp = await session.importStops({ name: 'week 2.csv', text: week2Csv() });
  expect(imp.ok).toBe(true);
  if (!imp.ok) return;
  week2Id = imp.stopSet.id;
  week2 = readStopsText('week 2.csv', week2Csv());
});

afterAll(async () => {
  await session.close();
});

describe('AppSession: the rebalance runs in a worker thread', () => {
  it('keeps the thread free, rises to done, and saves the plan the rebalance gives on this thread', async () => {
    started.length = 0;
    const seen: RebalanceStatus[] = [];
    const watch = watchThread();
    let end: RebalanceStatus;
    try {
      const s = await session.startRebalance('week 1', week2Id, 'week 2', { demandShare: 0.05 });
      expect(s).toMatchObject({ state: 'running', fraction: 0, parent: 'week 1', planName: 'week 2', report: null });
      // Another call answers while the rebalance is under way, and the name is taken meanwhile.
      expect((await session.project()).plans.map((p) => p.name)).toEqual(['week 1']);
      await expect(session.startRun(week2Id, { zones: 3 }, 'week 2')).rejects.toThrow(/already under way/);
      await expect(session.startRebalance('week 1', week2Id, 'week 2', null)).rejects.toThrow(/already under way/);
      await expect(session.renamePlan('week 1', 'week 2')).rejects.toThrow(/already under way/);
      const poll = setInterval(() => void session.rebalanceStatus(s.id).then((x) => seen.push(x)), 20);
      try {
        end = await session.waitForRebalance(s.id);
      } finally {
        clearInterval(poll);
      }
    } finally {
      watch.stop();
    }
    expect(started).toHaveLength(1);
    expect(end.state).toBe('done');
    expect(end.fraction).toBe(1);
    expect(end.message).toBeNull();
    // The thread was never held for long (the solve alone takes seconds at this size).
    expect(watch.longestGapMs).toBeLessThan(1000);
    // Progress never went back, and was seen part way.
    const fractions = seen.map((x) => x.fraction);
    for (let i = 1; i < fractions.length; i++) expect(fractions[i]!).toBeGreaterThanOrEqual(fractions[i - 1]!);
    expect(seen.some((x) => x.state === 'running' && x.fraction > 0 && x.fraction < 1)).toBe(true);

    // The same rebalance on this thread (the plan as saved, no edits) gives the same report and plan.
    const here = rebalancePlan({ stops: base.stops, plan: base.plan }, week2, { budget: { demandShare: 0.05 } });
    expect(end.report).toEqual(here.report);
    const view = await session.plan('week 2');
    expect(view.info.parent).toBe('week 1');
    expect(view.info.stops).toBe(N - 500);
    expect(view.info.objectiveKm2).toBeCloseTo(here.solved.plan.objectiveKm2, 6);
    const arrays = await session.planArrays('week 2');
    const zones = new Int16Array(arrays.buffer, arrays.zoneOffset, arrays.count);
    let differ = 0;
    for (let i = 0; i < arrays.count; i++) if (here.solved.plan.zoneIds[here.solved.plan.assignment[i]!] !== view.zones[zones[i]!]?.zone) differ++;
    expect(differ).toBe(0);
    // The saved plan carries its zone polygons (drawn in the worker): one per zone.
    expect((view.boundaries as { features: unknown[] } | null)?.features).toHaveLength(12);
  });

  it('cancels at once: nothing saved, the name free again', async () => {
    const before = (await session.project()).plans.map((p) => p.name);
    const s = await session.startRebalance('week 1', week2Id, 'cancelled week', { stops: 100 });
    await new Promise((r) => setTimeout(r, 100));
    const t0 = performance.now();
    const c = await session.cancelRebalance(s.id);
    expect(performance.now() - t0).toBeLessThan(1000);
    expect(c.state).toBe('cancelled');
    expect(c.message).toMatch(/cancelled; the saved plans are unchanged/);
    expect(c.report).toBeNull();
    expect((await session.rebalanceStatus(s.id)).state).toBe('cancelled');
    expect((await session.project()).plans.map((p) => p.name)).toEqual(before);
    // The name can be used again, and a cancel after the end changes nothing.
    expect((await session.cancelRebalance(s.id)).state).toBe('cancelled');
    await expect(session.startRebalance('week 1', week2Id, 'cancelled week', null)).resolves.toMatchObject({ state: 'running' });
  });

  it('ends failed with the solver\'s message when the budget is too small, and rebalance() rejects with it', async () => {
    // A smaller plan of its own (the search for a budget that works takes a few rounds).
    const small = stopsCsv(1000, 11);
    const a = await session.importStops({ name: 'small.csv', text: small });
    const lines = small.trim().split('\n');
    const b = await session.importStops({ name: 'small 2.csv', text: [lines[0]!, ...lines.slice(1).map((l, i) => (i % 3 === 0 ? l.replace(/,(\d+)$/, (_m, d: string) => `,${Number(d) * 3}`) : l))].join('\n') });
    if (!a.ok || !b.ok) throw new Error('import failed');
    await savePlanToProject(file, await solveStops(readStopsText('small.csv', small), { zones: 6, balance: 0.05, seed: 2, threads: 1 }), 'small');
    const s = await session.startRebalance('small', b.stopSet.id, 'too few', { stops: 0 });
    const end = await session.waitForRebalance(s.id);
    expect(end.state).toBe('failed');
    expect(end.message).toMatch(/move budget is too small: .* needs at least \d+ stops/);
    await expect(session.rebalance('small', b.stopSet.id, 'too few', { stops: 0 })).rejects.toMatchObject({ kind: 'solve', message: end.message });
    expect((await session.project()).plans.map((p) => p.name)).not.toContain('too few');
  });

  it('ends failed with a message when the worker thread dies', async () => {
    const { session: s2, file: f2 } = await emptySession({ rebalanceWorkerFactory: () => new Worker('process.exit(3)', { eval: true }) });
    try {
      expect((await s2.importStops({ name: 'a.csv', text: stopsCsv(300) })).ok).toBe(true);
      await savePlanToProject(f2, await solveStops(readStopsText('a.csv', stopsCsv(300)), { zones: 3, seed: 1, threads: 1 }), 'a');
      const st = await s2.startRebalance('a', 1, 'b', null);
      const end = await s2.waitForRebalance(st.id);
      expect(end.state).toBe('failed');
      expect(end.message).toMatch(/the rebalance stopped unexpectedly \(exit code 3\)/);
      expect((await s2.project()).plans.map((p) => p.name)).toEqual(['a']);
    } finally {
      await s2.close();
    }
  });

  it('stops a rebalance and a plan run under way when another project is opened, and says why', async () => {
    const { session: s2, file: f2 } = await emptySession();
    const other = path.join(tempDir('other'), 'other.zoneplan');
    await createProject(other);
    try {
      expect((await s2.importStops({ name: 'a.csv', text: stopsCsv(N) })).ok).toBe(true);
      await savePlanToProject(f2, base, 'a');
      const reb = await s2.startRebalance('a', 1, 'b', { stops: 10 });
      const run = await s2.startRun(1, { zones: 12, balance: 0.05 }, 'c');
      await s2.openProject(other);
      for (const st of [await s2.rebalanceStatus(reb.id), await s2.runStatus(run.id)]) {
        expect(st.state).toBe('cancelled');
        expect(st.message).toMatch(/stopped because project test\.zoneplan was closed; nothing was saved/);
      }
      expect((await s2.project()).plans).toEqual([]);
      await s2.openProject(f2);
      expect((await s2.project()).plans.map((p) => p.name)).toEqual(['a']);
    } finally {
      await s2.close();
    }
  });

  it('refuses an unknown rebalance id', async () => {
    await expect(session.rebalanceStatus('no-such-id')).rejects.toThrow(/no rebalance no-such-id/);
  });
});
