import { accessSync, constants } from 'node:fs';
import { WriteError, explainWriteError } from '../io/atomic.js';

/** What is wrong with a project file or a request to it; every one is for the user to act on. */
export type ProjectErrorCode =
  | 'no-such-file'
  | 'exists'
  | 'not-a-project'
  | 'newer-version'
  | 'cannot-upgrade'
  | 'damaged'
  | 'locked'
  | 'busy'
  | 'no-such-plan'
  | 'duplicate-name'
  | 'bad-name'
  | 'bad-edit'
  | 'mismatch'
  | 'moved'
  | 'read-only';

/**
 * A project file that cannot be used as asked (not a project, damaged, open elsewhere, newer than
 * this Zoneplan) or a request it cannot take (a plan name used twice, an unknown plan). The
 * message names the file and says what to do; nothing in the file was changed.
 */
export class ProjectError extends Error {
  constructor(
    message: string,
    readonly code: ProjectErrorCode,
    readonly file: string,
  ) {
    super(message);
    this.name = 'ProjectError';
  }
}

interface SqliteLike {
  readonly code?: unknown;
  readonly message?: unknown;
}

function sqliteCode(e: unknown): string | null {
  const code = (e as SqliteLike | null)?.code;
  return typeof code === 'string' && code.startsWith('SQLITE_') ? code : null;
}

/** True for SQLite's "this is not a database" and "the database is malformed" errors. */
export function isCorruptionError(e: unknown): boolean {
  const code = sqliteCode(e);
  return code !== null && (code.startsWith('SQLITE_CORRUPT') || code === 'SQLITE_NOTADB');
}

export function damagedError(file: string, detail: string): ProjectError {
  return new ProjectError(
    `${file} is damaged (SQLite integrity check: ${detail}); it was not changed. Open a backup copy, or ask for help recovering it`,
    'damaged',
    file,
  );
}

/**
 * Turns an error from SQLite into one a planner can act on: disk full and read-only places as a
 * WriteError (the words of src/io/atomic.ts), a damaged file as ProjectError 'damaged', another
 * writer as 'busy'. Anything else is returned as it was (an internal fault).
 */
export function explainStoreError(file: string, e: unknown): unknown {
  if (e instanceof ProjectError || e instanceof WriteError) return e;
  const code = sqliteCode(e);
  if (code === null) {
    // File-system errors (the lock file, the folder) carry errno codes.
    return (e as NodeJS.ErrnoException)?.code && typeof (e as NodeJS.ErrnoException).code === 'string' && (e as NodeJS.ErrnoException).code!.startsWith('E')
      ? explainWriteError(file, e)
      : e;
  }
  if (code === 'SQLITE_FULL') return explainWriteError(file, { code: 'ENOSPC' });
  if (code.startsWith('SQLITE_READONLY') || code.startsWith('SQLITE_CANTOPEN') || code === 'SQLITE_PERM') {
    return explainWriteError(file, { code: writeAccessCode(file) ?? 'EACCES' });
  }
  if (code.startsWith('SQLITE_CORRUPT') || code === 'SQLITE_NOTADB') return damagedError(file, String((e as SqliteLike).message));
  if (code.startsWith('SQLITE_BUSY') || code.startsWith('SQLITE_LOCKED')) {
    return new ProjectError(`${file} is busy: another program is writing to it; try again in a moment`, 'busy', file);
  }
  if (code.startsWith('SQLITE_IOERR')) return explainWriteError(file, e);
  return e;
}

/** Why the file (or its folder) cannot be written, as an errno code, or null when it can. */
function writeAccessCode(file: string): string | null {
  try {
    accessSync(file, constants.W_OK);
    return null;
  } catch (e) {
    return (e as NodeJS.ErrnoException).code ?? null;
  }
}
