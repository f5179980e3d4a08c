import { closeSync, fsyncSync, linkSync, openSync, readFileSync, renameSync, statSync, unlinkSync, writeSync } from 'node:fs';
import { randomBytes } from 'node:crypto';
import { hostname } from 'node:os';
import path from 'node:path';
import { ProjectError } from './errors.js';

/**
 * One writer per project file: a lock file beside it (`FILE.lock`), made with O_EXCL so that of
 * two processes creating it at once exactly one succeeds, holding the holder's pid, computer and a
 * random token. SQLite's own locks already keep the database consistent under two writers
 * (https://www.sqlite.org/lockingv3.html); this lock is about people: a second window or process
 * that would save into the same project is told who has it instead.
 *
 * A lock left by a process that died (SIGKILL, power cut) is stale: same computer and that pid no
 * longer runs. It is taken over: moved aside under a name of our own (rename is atomic, so of two
 * takers only one moves it), checked to be the very lock judged stale, deleted, and then made anew
 * with O_EXCL. A lock from another computer cannot be checked and is never taken over.
 *
 * Readers (listing, loading, exporting) take no lock: in WAL mode readers and the writer do not
 * block each other (https://www.sqlite.org/wal.html).
 */

export interface LockOwner {
  readonly app: 'zoneplan';
  readonly pid: number;
  readonly host: string;
  readonly token: string;
  readonly since: string;
}

/** Locks this process holds, by lock path: another window in the same process is refused too. */
const held = new Map<string, string>();

/** A lock file younger than this with unreadable content is one being written right now. */
const FRESH_MS = 10_000;

export function lockPathOf(file: string): string {
  return `${path.resolve(file)}.lock`;
}

export class ProjectLock {
  private released = false;

  constructor(
    readonly file: string,
    readonly lockPath: string,
    readonly token: string,
  ) {}

  /** Removes the lock file if it is still ours. Safe to call twice. */
  release(): void {
    if (this.released) return;
    this.released = true;
    held.delete(this.lockPath);
    const owner = readOwner(this.lockPath);
    if (owner && owner.token === this.token) {
      try {
        unlinkSync(this.lockPath);
      } catch {
        /* already gone: nothing to release */
      }
    }
  }
}

process.on('exit', () => {
  for (const [lockPath, token] of held) {
    const owner = readOwner(lockPath);
    if (owner?.token === token) {
      try {
        unlinkSync(lockPath);
      } catch {
        /* best effort on the way out */
      }
    }
  }
});

/** The error for a project another window or process holds. */
export function lockedError(file: string, owner: LockOwner | null, lockPath = lockPathOf(file)): ProjectError {
  const who = owner ? `pid ${owner.pid}${owner.host !== hostname() ? ` on computer ${owner.host}` : ''}` : 'pid unknown';
  const hint = owner && owner.host !== hostname() ? `; if Zoneplan no longer runs there, delete ${lockPath}` : '';
  return new ProjectError(`${file} is open in another Zoneplan window (${who}); close it there first${hint}`, 'locked', file);
}

function readOwner(lockPath: string): LockOwner | null {
  try {
    const o = JSON.parse(readFileSync(lockPath, 'utf8')) as Partial<LockOwner>;
    if (o.app === 'zoneplan' && typeof o.pid === 'number' && typeof o.host === 'string' && typeof o.token === 'string') return o as LockOwner;
  } catch {
    /* missing or not (yet) a lock we wrote */
  }
  return null;
}

function processRuns(pid: number): boolean {
  try {
    process.kill(pid, 0);
    return true;
  } catch (e) {
    // EPERM: it runs, as another user.
    return (e as NodeJS.ErrnoException).code === 'EPERM';
  }
}

/** The live holder of the lock, or null when there is none (no lock file, or a stale one). */
export function lockHolder(file: string): LockOwner | null {
  const lockPath = lockPathOf(file);
  const owner = readOwner(lockPath);
  if (!owner) return null;
  return isStale(lockPath, owner) ? null : owner;
}

function isStale(lockPath: string, owner: LockOwner): boolean {
  if (owner.host !== hostname()) return false;
  if (owner.pid === process.pid) return held.get(lockPath) !== owner.token;
  return !processRuns(owner.pid);
}

function tryCreate(lockPath: string, owner: LockOwner): boolean {
  let fd: number;
  try {
    fd = openSync(lockPath, 'wx');
  } catch (e) {
    if ((e as NodeJS.ErrnoException).code === 'EEXIST') return false;
    throw e;
  }
  try {
    writeSync(fd, `${JSON.stringify(owner)}\n`);
    fsyncSync(fd);
  } finally {
    closeSync(fd);
  }
  return true;
}

/**
 * Moves a stale lock out of the way and deletes it. `same` tells whether what was moved is the
 * lock judged stale; if not (a live process made a fresh one just before the move), it is put back.
 */
function takeOver(lockPath: string, same: (moved: LockOwner | null) => boolean, token: string): void {
  const aside = `${lockPath}.${token}.stale`;
  try {
    renameSync(lockPath, aside);
  } catch (e) {
    if ((e as NodeJS.ErrnoException).code === 'ENOENT') return; // another process moved it first
    throw e;
  }
  if (!same(readOwner(aside))) {
    // Between our look and the move, a live process made a fresh lock: put it back.
    try {
      linkSync(aside, lockPath);
    } catch {
      /* a third process made one meanwhile: that one stands */
    }
  }
  unlinkSync(aside);
}

/**
 * Takes the write lock of a project file or throws ProjectError 'locked' naming the holder.
 * File-system errors (a read-only folder) are thrown as they are, for explainStoreError.
 */
export function acquireLock(file: string): ProjectLock {
  const lockPath = lockPathOf(file);
  const token = randomBytes(8).toString('hex');
  const me: LockOwner = { app: 'zoneplan', pid: process.pid, host: hostname(), token, since: new Date().toISOString() };
  for (let attempt = 0; attempt < 4; attempt++) {
    if (tryCreate(lockPath, me)) {
      held.set(lockPath, token);
      return new ProjectLock(file, lockPath, token);
    }
    const owner = readOwner(lockPath);
    if (!owner) {
      // Unreadable: being written this instant (fresh), or left half-written by a crash (old).
      let age = 0;
      try {
        age = Date.now() - statSync(lockPath).mtimeMs;
      } catch {
        continue; // gone meanwhile: try again
      }
      if (age < FRESH_MS) throw lockedError(file, null, lockPath);
      takeOver(lockPath, (moved) => moved === null, token);
      continue;
    }
    if (!isStale(lockPath, owner)) throw lockedError(file, owner, lockPath);
    takeOver(lockPath, (moved) => moved?.token === owner.token, token);
  }
  throw lockedError(file, readOwner(lockPath), lockPath);
}
