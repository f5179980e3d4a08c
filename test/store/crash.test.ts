/**
 * A writer killed with SIGKILL in the middle of a stream of saves: the file must reopen valid
 * (PRAGMA integrity_check) with every plan the child reported as committed present and intact.
 * SQLite promises that a transaction is all or nothing across a crash
 * (https://www.sqlite.org/atomiccommit.html; in WAL mode https://www.sqlite.org/wal.html).
 */
import Database from 'better-sqlite3';
import { afterAll, describe, expect, it } from 'vitest';
import { createProject, listPlans, openProject } from '../../src/api/project.js';
import { ProjectStore } from '../../src/store/index.js';
import { crashCase } from './synthetic.js';
import { runChild, tempDir } from './support.js';

const tmp = tempDir('crash');
afterAll(() => tmp.cleanup());

describe('SIGKILL during a stream of saves', () => {
  // Kill after a few different numbers of committed saves, so that the kill lands at different
  // points of a save (each save writes a new stop set of 20 000 stops, most of the child's time).
  for (const after of [3, 9]) {
    it(`keeps every committed plan intact (killed after ${after} saves)`, async () => {
      const file = tmp.file(`crash-${after}.zoneplan`);
      await createProject(file);
      const child = runChild('save-child.ts', [file]);
      await child.waitForLines(after);
      child.process.kill('SIGKILL');
      const { signal } = await child.exited;
      expect(signal, child.stderr()).toBe('SIGKILL');
      const printed = [...child.lines];
      expect(printed.length).toBeGreaterThanOrEqual(after);

      // The file as SQLite sees it, before Zoneplan touches it (read-only: the WAL stays as the
      // kill left it, for Zoneplan's own open below).
      const raw = new Database(file, { readonly: true, fileMustExist: true });
      expect(raw.pragma('integrity_check', { simple: true })).toBe('ok');
      raw.close();

      const names = (await listPlans(file)).map((p) => p.name);
      // Committed saves are a prefix plan-0 .. plan-(m-1): every printed one, and at most the one
      // that committed in the instant between its commit and its line.
      for (const name of printed) expect(names).toContain(name);
      expect(names).toEqual(Array.from({ length: names.length }, (_, i) => `plan-${i}`));
      expect(names.length - printed.length).toBeLessThanOrEqual(1);

      // Every plan in the file loads and equals what the child made from its number.
      const store = ProjectStore.open(file, { write: false });
      try {
        for (let i = 0; i < names.length; i++) {
          const want = crashCase(i);
          const got = store.loadPlan(want.name);
          expect(got.stops.ids).toEqual(want.stops.ids);
          expect(got.stops.lonLat).toEqual(want.stops.lonLat);
          expect(got.stops.demand).toEqual(want.stops.demand);
          expect(got.plan.centres).toEqual(want.plan.centres);
          expect(got.plan.assignment).toEqual(want.plan.assignment);
          expect(got.plan.locked).toEqual(want.plan.locked);
          expect(got.plan.limits).toEqual(want.plan.limits);
        }
        expect(store.summary().stopSets).toBe(names.length);
      } finally {
        store.close();
      }

      // The dead child's lock is stale: the file opens for writing again and takes more saves.
      const handle = await openProject(file);
      try {
        const next = crashCase(names.length);
        handle.store.savePlan({ stops: next.stops, plan: next.plan }, next.name);
        expect((await handle.listPlans()).map((p) => p.name)).toContain(next.name);
      } finally {
        await handle.close();
      }
    });
  }
});
