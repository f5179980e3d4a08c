/**
 * Faults on export and save: a destination that cannot be written (a folder that does not
 * exist, a read-only file system, a full disk), the project file deleted, replaced or locked
 * while open. Every one must give a clear message (exit 2 on the command line), write nothing,
 * leave an existing file as it was, and lose nothing already saved.
 *
 * Root ignores file modes (chmod 0444 does not stop root from writing, and CI may run as root),
 * so modes are not how these tests make a place unwritable. Instead:
 * - injected file-system calls for writeFileAtomic (a write that fails with ENOSPC, a short write
 *   followed by ENOSPC, a failing fsync or rename);
 * - SQLite's max_page_count for a project save that runs out of room (SQLITE_FULL, which is what
 *   a full disk gives; https://www.sqlite.org/pragma.html#pragma_max_page_count);
 * - where the machine allows mounting (root with CAP_SYS_ADMIN, as on the CI machines), a real
 *   64 KB tmpfs for a full disk and the same remounted read-only for EROFS; skipped otherwise,
 *   with the reason printed.
 */
import Database from 'better-sqlite3';
import { execFileSync } from 'node:child_process';
import { chmodSync, existsSync, mkdirSync, readFileSync, readdirSync, renameSync, rmSync, writeFileSync } from 'node:fs';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { WriteError, writeFileAtomic, type AtomicFs } from '../../src/io/atomic.js';
import * as nodeFs from 'node:fs';
import { createProject, listPlans, openProject, savePlanToProject } from '../../src/api/project.js';
import { solveStops } from '../../src/api/plan-file.js';
import { readStopsFile } from '../../src/io/read.js';
import { ProjectError, ProjectStore } from '../../src/store/index.js';
import { runChild } from '../store/support.js';
import { HOSTILE_DIR } from '../fixtures/hostile/make.js';
import { ROOT, buildCli, expectCleanRefusal, runCli, strayFiles, tempDir } from './support.js';

const BASE = path.join(HOSTILE_DIR, 'base-stops.csv');
const tmp = tempDir('faults');
let cli: Awaited<ReturnType<typeof buildCli>>;
/** A stops file whose plan GeoJSON is far larger than the small file system below (about 1 MB). */
const BIG = tmp.file('big-stops.csv');

beforeAll(async () => {
  cli = await buildCli();
  const lines = ['id,lat,lon,demand'];
  for (let i = 0; i < 6000; i++) lines.push(`S${i},${(52.3 + ((i * 7919) % 4000) / 10000).toFixed(5)},${(13.1 + ((i * 104729) % 6000) / 10000).toFixed(5)},${1 + (i % 5)}`);
  writeFileSync(BIG, `${lines.join('\n')}\n`);
});
afterAll(() => {
  cli?.cleanup();
  tmp.cleanup();
});

const errno = (code: string): Error => Object.assign(new Error(`${code}: simulated`), { code });

/** node:fs with some calls replaced. */
function fsWith(over: Partial<AtomicFs>): AtomicFs {
  return {
    openSync: (p, f) => nodeFs.openSync(p, f),
    writeSync: (fd, d) => nodeFs.writeSync(fd, d),
    fsyncSync: (fd) => nodeFs.fsyncSync(fd),
    closeSync: (fd) => nodeFs.closeSync(fd),
    renameSync: (a, b) => nodeFs.renameSync(a, b),
    unlinkSync: (p) => nodeFs.unlinkSync(p),
    ...over,
  };
}

describe('writeFileAtomic with failing file-system calls', () => {
  const cases: [string, string, RegExp, Partial<AtomicFs>][] = [
    ['the first write fails: disk full', 'ENOSPC', /the disk is full/, { writeSync: () => { throw errno('ENOSPC'); } }],
    [
      'a short write (the disk takes half a chunk), then disk full',
      'ENOSPC',
      /the disk is full/,
      (() => {
        let calls = 0;
        return { writeSync: (fd: number, d: Uint8Array) => (calls++ === 0 ? nodeFs.writeSync(fd, d.subarray(0, Math.ceil(d.length / 2))) : (() => { throw errno('ENOSPC'); })()) };
      })(),
    ],
    ['quota used up', 'EDQUOT', /quota/, { writeSync: () => { throw errno('EDQUOT'); } }],
    ['fsync fails (I/O error)', 'EIO', /EIO/, { fsyncSync: () => { throw errno('EIO'); } }],
    ['the rename fails (read-only file system)', 'EROFS', /read-only file system/, { renameSync: () => { throw errno('EROFS'); } }],
    ['the temporary file cannot be made (permission denied)', 'EACCES', /permission denied/, { openSync: () => { throw errno('EACCES'); } }],
  ];
  for (const [what, code, message, over] of cases) {
    it(`${what}: WriteError ${code}, the old file unchanged, no temporary file left`, () => {
      const dir = tmp.file(`atomic-${code}-${what.length}`);
      mkdirSync(dir);
      const target = path.join(dir, 'plan.geojson');
      writeFileSync(target, 'the old plan\n');
      let error: unknown;
      try {
        writeFileAtomic(target, ['{"type":"FeatureCollection",', `"features":[${'{},'.repeat(50_000)}{}]}`], fsWith(over));
      } catch (e) {
        error = e;
      }
      expect(error).toBeInstanceOf(WriteError);
      expect((error as WriteError).code).toBe(code);
      expect((error as WriteError).message).toMatch(message);
      expect((error as WriteError).message).toMatch(/nothing was written there/);
      expect(readFileSync(target, 'utf8')).toBe('the old plan\n');
      expect(readdirSync(dir)).toEqual(['plan.geojson']);
    });
  }

  it('a short write is completed, not silently cut (the whole text arrives)', () => {
    const target = tmp.file('short.txt');
    const text = 'x'.repeat(100_000);
    // A file system that takes at most 4 KB per call (as pipes and some network file systems do).
    writeFileAtomic(target, [text, 'end'], fsWith({ writeSync: (fd, d) => nodeFs.writeSync(fd, d.subarray(0, 4096)) }));
    expect(readFileSync(target, 'utf8')).toBe(`${text}end`);
  });
});

describe('destinations that cannot be written (real file system)', () => {
  it('a folder that does not exist: exit 2, "the folder does not exist", nothing made', async () => {
    const out = tmp.file('no/such/folder/plan.geojson');
    const run = await runCli(cli.command, ['plan', BASE, '--zones', '3', '--out', out, '--quiet']);
    expectCleanRefusal(run, [out, tmp.file('no')], 'plan --out into a missing folder');
    expect(run.stderr).toMatch(/cannot write .*plan\.geojson: the folder does not exist; nothing was written there/);
  });

  it('a destination that is a folder, and a path through a file: exit 2 with the reason', async () => {
    const folder = tmp.file('a-folder.geojson');
    mkdirSync(folder);
    const a = await runCli(cli.command, ['plan', BASE, '--zones', '3', '--out', folder, '--quiet']);
    expectCleanRefusal(a, [], 'plan --out a folder');
    expect(a.stderr).toMatch(/the destination is a folder/);
    expect(readdirSync(folder)).toEqual([]);
    const file = tmp.file('a-file');
    writeFileSync(file, 'x');
    const b = await runCli(cli.command, ['plan', BASE, '--zones', '3', '--assignments', path.join(file, 'a.csv'), '--quiet']);
    expectCleanRefusal(b, [], 'plan --assignments under a file');
    expect(b.stderr).toMatch(/a part of the path is not a folder/);
    expect(readFileSync(file, 'utf8')).toBe('x');
  });

  it('export of a saved plan into a missing folder: exit 2, the project unchanged', async () => {
    const project = tmp.file('export.zoneplan');
    await createProject(project);
    const solved = await solveStops(readStopsFile(BASE), { zones: 3, threads: 1 });
    await savePlanToProject(project, solved, 'week 1');
    const before = readFileSync(project);
    const out = tmp.file('missing-dir/plan.geojson');
    const run = await runCli(cli.command, ['export', project, '--plan', 'week 1', '--out', out]);
    expectCleanRefusal(run, [out], 'export into a missing folder');
    expect(run.stderr).toMatch(/the folder does not exist/);
    expect(Buffer.compare(readFileSync(project), before)).toBe(0);
    expect((await listPlans(project)).map((p) => p.name)).toEqual(['week 1']);
  });

  it('file modes do not stop root: chmod 0555 is only a test when not running as root', () => {
    const dir = tmp.file('mode-0555');
    mkdirSync(dir);
    chmodSync(dir, 0o555);
    let error: unknown = null;
    try {
      writeFileAtomic(path.join(dir, 'plan.geojson'), 'x');
    } catch (e) {
      error = e;
    }
    chmodSync(dir, 0o755);
    if (process.getuid?.() === 0) {
      // As root the write goes through: this is why the read-only cases use a read-only mount
      // and injected failures instead of file modes.
      expect(error).toBeNull();
    } else {
      expect(error).toBeInstanceOf(WriteError);
      expect((error as WriteError).message).toMatch(/permission denied/);
      expect(readdirSync(dir)).toEqual([]);
    }
  });
});

/** Mounts a tmpfs of `kb` KB at a new folder, or returns why it cannot. */
function mountTmpfs(kb: number): { dir: string; remountReadOnly: () => void; remountReadWrite: () => void; unmount: () => void } | string {
  if (process.platform !== 'linux') return 'not Linux';
  const dir = tmp.file(`tmpfs-${kb}-${Math.round(performance.now())}`);
  mkdirSync(dir);
  try {
    execFileSync('mount', ['-t', 'tmpfs', '-o', `size=${kb}k,mode=0777`, 'tmpfs', dir], { stdio: 'pipe' });
  } catch (e) {
    rmSync(dir, { recursive: true, force: true });
    return `cannot mount a tmpfs here (${String((e as { stderr?: Buffer }).stderr ?? e).trim().split('\n')[0]})`;
  }
  return {
    dir,
    remountReadOnly: () => execFileSync('mount', ['-o', 'remount,ro', dir], { stdio: 'pipe' }),
    remountReadWrite: () => execFileSync('mount', ['-o', 'remount,rw', dir], { stdio: 'pipe' }),
    unmount: () => {
      try {
        execFileSync('umount', ['-l', dir], { stdio: 'pipe' });
      } finally {
        rmSync(dir, { recursive: true, force: true });
      }
    },
  };
}

describe('a real full disk and a real read-only file system (a small tmpfs)', () => {
  const probe = mountTmpfs(64);
  const why = typeof probe === 'string' ? probe : null;
  if (typeof probe !== 'string') probe.unmount();
  if (why) console.log(`faults: tmpfs cases skipped: ${why}`);

  it.skipIf(why !== null)('export to a full disk: exit 2 "the disk is full", the old plan file unchanged, no temporary file', async () => {
    const fsys = mountTmpfs(256) as Exclude<ReturnType<typeof mountTmpfs>, string>;
    try {
      const old = path.join(fsys.dir, 'plan.geojson');
      writeFileSync(old, '{"the":"old plan"}\n');
      const run = await runCli(cli.command, ['plan', BIG, '--zones', '5', '--out', old, '--quiet']);
      expectCleanRefusal(run, [], 'plan --out onto a full disk');
      expect(run.stderr).toMatch(/cannot write .*plan\.geojson: the disk is full; nothing was written there/);
      expect(readFileSync(old, 'utf8')).toBe('{"the":"old plan"}\n');
      expect(strayFiles(fsys.dir, ['plan.geojson'])).toEqual([]);
    } finally {
      fsys.unmount();
    }
  });

  it.skipIf(why !== null)('export and project save on a read-only file system: exit 2, the reason, nothing changed', async () => {
    const fsys = mountTmpfs(2048) as Exclude<ReturnType<typeof mountTmpfs>, string>;
    try {
      const project = path.join(fsys.dir, 'ro.zoneplan');
      await createProject(project);
      const solved = await solveStops(readStopsFile(BASE), { zones: 3, threads: 1 });
      await savePlanToProject(project, solved, 'saved before');
      fsys.remountReadOnly();
      const before = readFileSync(project);
      const out = path.join(fsys.dir, 'plan.geojson');
      const a = await runCli(cli.command, ['plan', BASE, '--zones', '3', '--out', out, '--quiet']);
      expectCleanRefusal(a, [out], 'plan --out onto a read-only file system');
      expect(a.stderr).toMatch(/read-only file system; nothing was written there/);
      const b = await runCli(cli.command, ['plan', BASE, '--zones', '3', '--project', project, '--name', 'new', '--quiet']);
      expectCleanRefusal(b, [], 'plan --project on a read-only file system');
      expect(b.stderr).toMatch(/ro\.zoneplan is on a read-only file system .*copy it somewhere writable/);
      expect(Buffer.compare(readFileSync(project), before)).toBe(0);
      // Even reading needs a writable folder (SQLite's WAL index): said as such, not as a failed write.
      await expect(listPlans(project)).rejects.toThrow(/ro\.zoneplan is on a read-only file system .*copy it somewhere writable/);
      fsys.remountReadWrite();
      expect((await listPlans(project)).map((p) => p.name)).toEqual(['saved before']);
    } finally {
      fsys.unmount();
    }
  });

  it.skipIf(why !== null)('project save onto a full disk: exit 2 "the disk is full", every saved plan intact', async () => {
    const fsys = mountTmpfs(1024) as Exclude<ReturnType<typeof mountTmpfs>, string>;
    try {
      const project = path.join(fsys.dir, 'full.zoneplan');
      await createProject(project);
      const solved = await solveStops(readStopsFile(BASE), { zones: 3, threads: 1 });
      await savePlanToProject(project, solved, 'saved before');
      // Fill what is left of the file system.
      const fd = nodeFs.openSync(path.join(fsys.dir, 'filler'), 'w');
      try {
        for (;;) nodeFs.writeSync(fd, Buffer.alloc(16 * 1024));
      } catch (e) {
        expect((e as NodeJS.ErrnoException).code).toBe('ENOSPC');
      } finally {
        nodeFs.closeSync(fd);
      }
      const run = await runCli(cli.command, ['plan', BIG, '--zones', '5', '--project', project, '--name', 'too big', '--quiet']);
      expectCleanRefusal(run, [], 'plan --project onto a full disk');
      expect(run.stderr).toMatch(/full\.zoneplan: (the disk is full|.*nothing was written)/);
      rmSync(path.join(fsys.dir, 'filler'));
      expect((await listPlans(project)).map((p) => p.name)).toEqual(['saved before']);
      const raw = new Database(project, { readonly: true });
      expect(raw.pragma('integrity_check', { simple: true })).toBe('ok');
      raw.close();
    } finally {
      fsys.unmount();
    }
  });
});

describe('project saves that run out of room (SQLITE_FULL through max_page_count)', () => {
  it('a save that does not fit: WriteError "the disk is full", the plans saved before intact', async () => {
    const project = tmp.file('pages.zoneplan');
    await createProject(project);
    const small = await solveStops(readStopsFile(BASE), { zones: 3, threads: 1 });
    const big = await solveStops(readStopsFile(BIG), { zones: 5, threads: 1 });
    const store = ProjectStore.open(project, { write: true });
    try {
      store.savePlan(small, 'small');
      const db = (store as unknown as { db: Database.Database }).db;
      const pages = db.pragma('page_count', { simple: true }) as number;
      db.pragma(`max_page_count = ${pages + 4}`);
      let error: unknown;
      try {
        store.savePlan(big, 'big');
      } catch (e) {
        error = e;
      }
      expect(error).toBeInstanceOf(WriteError);
      expect((error as WriteError).message).toMatch(/the disk is full; nothing was written there/);
      expect(store.listPlans().map((p) => p.name)).toEqual(['small']);
    } finally {
      store.close();
    }
    expect((await listPlans(project)).map((p) => p.name)).toEqual(['small']);
  });
});

describe('the project file deleted, replaced or locked while open', () => {
  it('deleted while open: the next save is refused with a clear message; what was saved stays readable', async () => {
    const project = tmp.file('deleted.zoneplan');
    await createProject(project);
    const solved = await solveStops(readStopsFile(BASE), { zones: 3, threads: 1 });
    const handle = await openProject(project);
    try {
      await handle.savePlan(solved, 'one');
      for (const f of [project, `${project}-wal`, `${project}-shm`]) rmSync(f, { force: true });
      // Before the fix this save "succeeded" into the deleted file, and was lost on close.
      await expect(handle.savePlan(solved, 'two')).rejects.toThrow(ProjectError);
      await expect(handle.savePlan(solved, 'two')).rejects.toThrow(/deleted\.zoneplan was deleted or moved after it was opened here, so nothing was saved into it/);
      // Nothing lost: the open project still reads what it had.
      expect((await handle.listPlans()).map((p) => p.name)).toEqual(['one']);
      expect((await handle.loadPlan('one')).plan.assignment.length).toBe(30);
    } finally {
      await handle.close();
    }
    expect(existsSync(`${project}.lock`)).toBe(false);
  });

  it('replaced by another file while open (a sync tool renamed a copy over it): refused, the new file untouched', async () => {
    const project = tmp.file('replaced.zoneplan');
    const other = tmp.file('other.zoneplan');
    await createProject(project);
    await createProject(other);
    const solved = await solveStops(readStopsFile(BASE), { zones: 3, threads: 1 });
    await savePlanToProject(other, solved, 'the other one');
    const handle = await openProject(project);
    try {
      renameSync(other, project);
      await expect(handle.savePlan(solved, 'mine')).rejects.toThrow(/replaced\.zoneplan was replaced by another file after it was opened here/);
    } finally {
      await handle.close();
    }
    expect((await listPlans(project)).map((p) => p.name)).toEqual(['the other one']);
  });

  it('locked by another Zoneplan process: exit 2 naming the pid, nothing saved', async () => {
    const project = tmp.file('locked.zoneplan');
    await createProject(project);
    const child = runChild('lock-child.ts', [project]);
    try {
      await child.waitForLines(1);
      const pid = /ready (\d+)/.exec(child.lines[0]!)![1];
      const run = await runCli(cli.command, ['plan', BASE, '--zones', '3', '--project', project, '--name', 'blocked', '--quiet']);
      expectCleanRefusal(run, [], 'plan --project on a locked project');
      expect(run.stderr).toContain(`is open in another Zoneplan window (pid ${pid}); close it there first`);
    } finally {
      child.process.stdin.end('close\n');
      await child.exited;
    }
    expect((await listPlans(project)).map((p) => p.name)).toEqual(['from the child']);
  });

  it('locked by another program holding an SQLite write transaction: "busy", nothing half-saved', async () => {
    const project = tmp.file('busy.zoneplan');
    await createProject(project);
    const solved = await solveStops(readStopsFile(BASE), { zones: 3, threads: 1 });
    const other = new Database(project);
    other.exec('BEGIN EXCLUSIVE');
    try {
      // Waits for SQLite's busy timeout (5 s), then gives up.
      await expect(savePlanToProject(project, solved, 'while busy')).rejects.toThrow(/busy\.zoneplan is busy: another program is writing to it; try again in a moment/);
    } finally {
      other.exec('ROLLBACK');
      other.close();
    }
    expect((await listPlans(project)).map((p) => p.name)).toEqual([]);
    await savePlanToProject(project, solved, 'after');
    expect((await listPlans(project)).map((p) => p.name)).toEqual(['after']);
  }, 30_000);
});

describe('SIGKILL during save stays in CI', () => {
  it('test/store/crash.test.ts is in the vitest run that npm test and .ci/run make', async () => {
    const config = (await import('../../vitest.config.js')).default as { test: { include: string[]; exclude: string[] } };
    const matches = (glob: string, file: string): boolean => path.matchesGlob(file, glob);
    const crash = 'test/store/crash.test.ts';
    expect(existsSync(path.join(ROOT, crash))).toBe(true);
    expect(config.test.include.some((g) => matches(g, crash))).toBe(true);
    expect(config.test.exclude.some((g) => matches(g, crash))).toBe(false);
    const pkg = JSON.parse(readFileSync(path.join(ROOT, 'package.json'), 'utf8')) as { scripts: Record<string, string> };
    expect(pkg.scripts['test']).toMatch(/\bvitest run(?=\s*(&&|$))/);
    expect(readFileSync(path.join(ROOT, '.ci', 'run'), 'utf8')).toMatch(/npm test/);
    // And the same for this folder.
    expect(config.test.include.some((g) => matches(g, 'test/hardening/faults.test.ts'))).toBe(true);
  });
});
