import Database from 'better-sqlite3';
import { existsSync, rmSync, statSync } from 'node:fs';
import path from 'node:path';
import { WriteError } from '../io/atomic.js';
import { acquireLock, type ProjectLock } from './lock.js';
import { ProjectError, damagedError, explainStoreError, isCorruptionError } from './errors.js';
import { APPLICATION_ID, SCHEMA_VERSION, migrate } from './schema.js';

/**
 * Opening and creating project files: the checks every open makes before anything is read or
 * written, and the connection settings.
 *
 * - Not a Zoneplan project (not SQLite at all, or another application's database): refused by
 *   the header's application id before anything is changed (no journal mode is set on it).
 * - Newer than this Zoneplan (user_version above SCHEMA_VERSION): refused, not guessed at.
 * - Damaged: `PRAGMA integrity_check` and `PRAGMA foreign_key_check` on every open
 *   (https://www.sqlite.org/pragma.html#pragma_integrity_check); integrity_check reads every page,
 *   so opening a very large project takes a moment.
 * - Older: copied to FILE.vN-backup.zoneplan (VACUUM INTO, https://www.sqlite.org/lang_vacuum.html#vacuuminto)
 *   so that an older Zoneplan can still open the copy, then migrated in one transaction.
 *
 * Writers use WAL (https://www.sqlite.org/wal.html) with synchronous=FULL: a commit is on disk
 * when it returns, also across a power cut (with NORMAL a WAL commit may roll back after a power
 * loss, https://www.sqlite.org/pragma.html#pragma_synchronous), and foreign keys on (they are off
 * by default on every connection, https://www.sqlite.org/foreignkeys.html#fk_enable).
 */

export interface OpenedDatabase {
  readonly db: Database.Database;
  readonly lock: ProjectLock | null;
  readonly migratedFrom: number | null;
  readonly backup: string | null;
}

/** After a checkpoint, the WAL file is cut back to this size (https://www.sqlite.org/pragma.html#pragma_journal_size_limit). */
const JOURNAL_SIZE_LIMIT = 64 * 1024 * 1024;

function notAProject(file: string, why: string): ProjectError {
  return new ProjectError(`${file} is not a Zoneplan project (${why})`, 'not-a-project', file);
}

function writerSettings(db: Database.Database): void {
  db.pragma('journal_mode = WAL');
  db.pragma('synchronous = FULL');
  db.pragma('foreign_keys = ON');
  db.pragma(`journal_size_limit = ${JOURNAL_SIZE_LIMIT}`);
}

/** Reads the header fields; a file SQLite cannot read as a database is not a project. */
function header(db: Database.Database, file: string): { applicationId: number; version: number } {
  try {
    return {
      applicationId: db.pragma('application_id', { simple: true }) as number,
      version: db.pragma('user_version', { simple: true }) as number,
    };
  } catch (e) {
    if ((e as { code?: string }).code === 'SQLITE_NOTADB') throw notAProject(file, 'it is not an SQLite database');
    throw e;
  }
}

function checkIntegrity(db: Database.Database, file: string): void {
  let rows: { integrity_check: string }[];
  try {
    rows = db.pragma('integrity_check') as { integrity_check: string }[];
  } catch (e) {
    if (isCorruptionError(e)) throw damagedError(file, String((e as Error).message));
    throw e;
  }
  if (rows.length !== 1 || rows[0]!.integrity_check !== 'ok') {
    const shown = rows.slice(0, 3).map((r) => r.integrity_check);
    throw damagedError(file, `${shown.join('; ')}${rows.length > 3 ? `; ... (${rows.length} problems)` : ''}`);
  }
  const broken = db.pragma('foreign_key_check') as unknown[];
  if (broken.length > 0) throw damagedError(file, `${broken.length} record${broken.length === 1 ? '' : 's'} refer to missing ones`);
}

/** FILE.vN-backup.zoneplan beside FILE (a number added if that name is taken). */
function backupPath(file: string, version: number): string {
  const dir = path.dirname(file);
  const base = path.basename(file, path.extname(file));
  for (let k = 1; ; k++) {
    const name = path.join(dir, `${base}.v${version}-backup${k > 1 ? `-${k}` : ''}.zoneplan`);
    if (!existsSync(name)) return name;
  }
}

/**
 * Opens a project for reading (no lock; several readers and one writer at a time) or for writing
 * (the lock, WAL, migration of an older file). A reader of an older file becomes a writer for
 * the migration. Throws ProjectError or WriteError with a message for the user.
 */
export function openDatabase(file: string, write: boolean): OpenedDatabase {
  try {
    const st = statSync(file);
    if (st.isDirectory()) throw notAProject(file, 'it is a folder');
    if (st.size === 0) throw notAProject(file, 'the file is empty');
  } catch (e) {
    if (e instanceof ProjectError) throw e;
    if ((e as NodeJS.ErrnoException).code === 'ENOENT') throw new ProjectError(`${file} does not exist`, 'no-such-file', file);
    throw explainStoreError(file, e);
  }
  let lock: ProjectLock | null = null;
  let db: Database.Database | null = null;
  try {
    if (write) lock = acquireLock(file);
    // Readers open read-write too but only read: SQLite then removes the WAL and shared-memory
    // files when the last connection closes, which a read-only connection cannot do. A
    // write-protected file is opened read-only by SQLite itself.
    db = new Database(file, { fileMustExist: true, timeout: 5000 });
    const { applicationId, version } = header(db, file);
    if (applicationId !== APPLICATION_ID) {
      throw notAProject(file, applicationId === 0 ? 'an SQLite database of another program' : `an SQLite database of another program, application id 0x${(applicationId >>> 0).toString(16)}`);
    }
    if (version > SCHEMA_VERSION) {
      throw new ProjectError(
        `${file} was saved by a newer Zoneplan (project format ${version}; this Zoneplan reads up to format ${SCHEMA_VERSION}); update Zoneplan to open it`,
        'newer-version',
        file,
      );
    }
    if (version < 1) throw damagedError(file, 'the project has no schema version');
    checkIntegrity(db, file);
    if (!write) {
      if (version < SCHEMA_VERSION) {
        db.close();
        db = null;
        return openDatabase(file, true);
      }
      db.pragma('foreign_keys = ON');
      return { db, lock: null, migratedFrom: null, backup: null };
    }
    let backup: string | null = null;
    let migratedFrom: number | null = null;
    if (version < SCHEMA_VERSION) {
      backup = backupPath(file, version);
      db.prepare('VACUUM INTO ?').run(backup);
      try {
        migrate(db);
      } catch (e) {
        const why = explainStoreError(file, e);
        if (why instanceof ProjectError || why instanceof WriteError) throw why;
        throw new ProjectError(
          `${file} could not be upgraded from project format ${version} to ${SCHEMA_VERSION} (${(e as Error).message}); it was not changed, and ${backup} is a copy of it`,
          'cannot-upgrade',
          file,
        );
      }
      migratedFrom = version;
    }
    // After the migration, so that a file that could not be upgraded keeps its journal mode too.
    writerSettings(db);
    return { db, lock, migratedFrom, backup };
  } catch (e) {
    try {
      db?.close();
    } catch {
      /* the error below is the one to report */
    }
    lock?.release();
    const why = explainStoreError(file, e);
    if (!write && why instanceof WriteError && why.code === 'EROFS') {
      // SQLite opens a WAL database only where it can make the -shm file beside it
      // (https://www.sqlite.org/wal.html#readonly), so even reading needs a writable folder.
      throw new ProjectError(
        `${file} is on a read-only file system (a CD, a write-protected share or snapshot): a project file can only be opened in a folder that can be written to; copy it somewhere writable and open the copy`,
        'read-only',
        file,
      );
    }
    throw why;
  }
}

/**
 * Makes a new, empty project at `file` (refused when the file exists) and opens it for writing.
 * The application id and the whole schema are written in one transaction.
 */
export function createDatabase(file: string, appVersion: string, now: Date): OpenedDatabase {
  let lock: ProjectLock | null = null;
  let db: Database.Database | null = null;
  let created = false;
  try {
    lock = acquireLock(file);
    if (existsSync(file)) throw new ProjectError(`${file} already exists; choose another name (a project is never overwritten)`, 'exists', file);
    for (const leftover of [`${file}-wal`, `${file}-shm`, `${file}-journal`]) {
      // SQLite would read a journal left by an earlier file of this name as part of the new one
      // (https://www.sqlite.org/howtocorrupt.html#_deleting_a_hot_journal).
      if (existsSync(leftover)) throw new ProjectError(`${leftover} is left over from an earlier file named ${path.basename(file)}; move or delete it first`, 'exists', file);
    }
    created = true;
    db = new Database(file, { timeout: 5000 });
    writerSettings(db);
    const d = db;
    d.transaction(() => {
      // PRAGMA takes no bound parameters; the value is our own constant.
      d.pragma(`application_id = ${APPLICATION_ID | 0}`);
      migrate(d); // its transaction becomes a savepoint of this one
      const put = d.prepare('INSERT INTO meta (key, value) VALUES (?, ?)');
      put.run('created_at', now.toISOString());
      put.run('created_by', appVersion);
    }).immediate();
    return { db: d, lock, migratedFrom: null, backup: null };
  } catch (e) {
    try {
      db?.close();
    } catch {
      /* reported below */
    }
    // Nothing half-made stays behind.
    if (created) for (const f of [file, `${file}-wal`, `${file}-shm`]) rmSync(f, { force: true });
    lock?.release();
    throw explainStoreError(file, e);
  }
}
