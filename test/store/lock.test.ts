/**
 * One writer per project file: a second window or process that would write gets a clear message
 * naming the holder; readers are not blocked (WAL: https://www.sqlite.org/wal.html); a lock left
 * by a dead process is taken over; one from another computer never is.
 */
import { existsSync, readFileSync, utimesSync, writeFileSync } from 'node:fs';
import { afterAll, describe, expect, it } from 'vitest';
import { createProject, listPlans, loadPlan, openProject, savePlanToProject } from '../../src/api/project.js';
import { main } from '../../src/cli/main.js';
import { lockPathOf } from '../../src/store/index.js';
import { capture, root, runChild, tempDir } from './support.js';
import { solvedOf, syntheticPlan, syntheticStops } from './synthetic.js';

const tmp = tempDir('lock');
afterAll(() => tmp.cleanup());

const stops = syntheticStops(300, 2);
const solved = solvedOf(stops, syntheticPlan(stops, 3, 2));

describe('the write lock', () => {
  it('refuses a second process with the holder named, lets readers read, and is gone after close', async () => {
    const file = tmp.file('held.zoneplan');
    await createProject(file);
    const child = runChild('lock-child.ts', [file]);
    await child.waitForLines(1);
    const pid = Number(child.lines[0]!.split(' ')[1]);
    expect(pid).toBe(child.process.pid);
    const message = `${file} is open in another Zoneplan window (pid ${pid}); close it there first`;

    await expect(openProject(file)).rejects.toMatchObject({ name: 'ProjectError', code: 'locked', message });
    await expect(savePlanToProject(file, solved, 'from the parent')).rejects.toMatchObject({ code: 'locked', message });

    // The command line says so before solving (no report on stdout) and exits 2.
    const io = capture();
    const code = await main(['plan', `${root}/demo-data/tallowmere-stops.csv`, '-k', '3', '--project', file, '--name', 'cli'], io);
    expect(code).toBe(2);
    expect(io.stderr()).toBe(`error: ${message}\n`);
    expect(io.stdout()).toBe('');

    // Readers are not blocked and see the child's committed plan.
    expect((await listPlans(file)).map((p) => p.name)).toEqual(['from the child']);
    expect((await loadPlan(file, 'from the child')).plan.assignment.length).toBe(500);

    child.process.stdin.end('close\n');
    await child.waitForLines(2);
    expect(child.lines[1]).toBe('closed');
    await child.exited;
    expect(existsSync(lockPathOf(file))).toBe(false);
    expect(existsSync(`${file}-wal`)).toBe(false);

    const saved = await savePlanToProject(file, solved, 'from the parent');
    expect(saved.name).toBe('from the parent');
  });

  it('takes over the lock of a process that was killed while holding it', async () => {
    const file = tmp.file('killed.zoneplan');
    await createProject(file);
    const child = runChild('lock-child.ts', [file]);
    await child.waitForLines(1);
    child.process.kill('SIGKILL');
    await child.exited;
    // The dead process's lock file is still there...
    const stale = JSON.parse(readFileSync(lockPathOf(file), 'utf8')) as { pid: number };
    expect(stale.pid).toBe(child.process.pid);
    // ...and is taken over.
    const handle = await openProject(file);
    try {
      expect((JSON.parse(readFileSync(lockPathOf(file), 'utf8')) as { pid: number }).pid).toBe(process.pid);
      expect((await handle.listPlans()).map((p) => p.name)).toEqual(['from the child']);
    } finally {
      await handle.close();
    }
    expect(existsSync(lockPathOf(file))).toBe(false);
  });

  it('refuses a second window in the same process, and file functions use the open window', async () => {
    const file = tmp.file('window.zoneplan');
    await createProject(file);
    const first = await openProject(file);
    try {
      await expect(openProject(file)).rejects.toMatchObject({ code: 'locked', message: `${file} is open in another Zoneplan window (pid ${process.pid}); close it there first` });
      // The file functions of this process go through the open window instead of the lock.
      await savePlanToProject(file, solved, 'through the window');
      expect((await first.listPlans()).map((p) => p.name)).toEqual(['through the window']);
    } finally {
      await first.close();
    }
    const again = await openProject(file);
    await again.close();
  });

  it('never takes over a lock from another computer', async () => {
    const file = tmp.file('elsewhere.zoneplan');
    await createProject(file);
    const lock = lockPathOf(file);
    const text = `${JSON.stringify({ app: 'zoneplan', pid: 4242, host: 'planning-pc-7', token: 'abc', since: '2026-01-01T00:00:00.000Z' })}\n`;
    writeFileSync(lock, text);
    await expect(openProject(file)).rejects.toMatchObject({
      code: 'locked',
      message: `${file} is open in another Zoneplan window (pid 4242 on computer planning-pc-7); close it there first; if Zoneplan no longer runs there, delete ${lock}`,
    });
    expect(readFileSync(lock, 'utf8')).toBe(text);
  });

  it('treats an unreadable lock file as being written when fresh, and as left by a crash when old', async () => {
    const file = tmp.file('garbled.zoneplan');
    await createProject(file);
    const lock = lockPathOf(file);
    writeFileSync(lock, '');
    await expect(openProject(file)).rejects.toMatchObject({ code: 'locked', message: `${file} is open in another Zoneplan window (pid unknown); close it there first` });
    const old = new Date(Date.now() - 60_000);
    utimesSync(lock, old, old);
    const handle = await openProject(file);
    await handle.close();
    expect(existsSync(lock)).toBe(false);
  });
});
