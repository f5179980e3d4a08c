import { closeSync, fsyncSync, openSync, renameSync, unlinkSync, writeSync } from 'node:fs';
import { randomBytes } from 'node:crypto';
import path from 'node:path';

/** A write that could not be done; the message says why in words a planner can act on. */
export class WriteError extends Error {
  constructor(
    message: string,
    readonly target: string,
    readonly code: string,
  ) {
    super(message);
    this.name = 'WriteError';
  }
}

export function explainWriteError(target: string, e: unknown): WriteError {
  const code = (e as NodeJS.ErrnoException)?.code ?? 'EIO';
  const reason: Record<string, string> = {
    ENOSPC: 'the disk is full',
    EDQUOT: 'the disk quota is used up',
    EROFS: 'the destination is on a read-only file system',
    EACCES: 'permission denied',
    EPERM: 'permission denied',
    ENOENT: 'the folder does not exist',
    ENOTDIR: 'a part of the path is not a folder',
    EISDIR: 'the destination is a folder',
  };
  const why = reason[code] ?? (e instanceof Error ? e.message : String(e));
  return new WriteError(`cannot write ${target}: ${why}; nothing was written there`, target, code);
}

/** The file-system calls writeFileAtomic makes; a test passes failing ones (disk full, ...). */
export interface AtomicFs {
  openSync(path: string, flags: string): number;
  writeSync(fd: number, data: Uint8Array): number;
  fsyncSync(fd: number): void;
  closeSync(fd: number): void;
  renameSync(from: string, to: string): void;
  unlinkSync(path: string): void;
}

const NODE_FS: AtomicFs = { openSync, writeSync: (fd, data) => writeSync(fd, data), fsyncSync, closeSync, renameSync, unlinkSync };

/**
 * Writes a file all or nothing: the chunks go to a temporary file beside the target, which is
 * flushed to disk and then renamed over the target. A failure (disk full, read-only place, a
 * throwing chunk producer) removes the temporary file and leaves any old target as it was.
 */
export function writeFileAtomic(target: string, chunks: Iterable<string> | string, fs: AtomicFs = NODE_FS): void {
  writeFilesAtomic([{ target, chunks }], fs);
}

/**
 * Writes files that belong together (a plan GeoJSON and its assignments CSV) all or nothing:
 * every one goes to its temporary file first, and only when all are written and flushed are
 * they renamed over their targets. A failure while writing leaves every target as it was.
 */
export function writeFilesAtomic(files: readonly { readonly target: string; readonly chunks: Iterable<string> | string }[], fs: AtomicFs = NODE_FS): void {
  const pending: { temp: string; target: string }[] = [];
  let current = files[0]?.target ?? '';
  try {
    for (const f of files) {
      current = f.target;
      pending.push({ temp: writeTemporary(f.target, f.chunks, fs), target: f.target });
    }
    while (pending.length > 0) {
      const p = pending[0]!;
      current = p.target;
      fs.renameSync(p.temp, p.target);
      pending.shift();
    }
  } catch (e) {
    for (const p of pending) {
      try {
        fs.unlinkSync(p.temp);
      } catch {
        /* already gone */
      }
    }
    if (e instanceof WriteError) throw e;
    if ((e as NodeJS.ErrnoException)?.code) throw explainWriteError(current, e);
    throw e;
  }
}

/** Writes the chunks to a new temporary file beside target, flushed and closed; returns its path. */
function writeTemporary(target: string, chunks: Iterable<string> | string, fs: AtomicFs): string {
  const dir = path.dirname(path.resolve(target));
  const temp = path.join(dir, `.${path.basename(target)}.${process.pid}.${randomBytes(4).toString('hex')}.tmp`);
  let fd: number | null = null;
  try {
    fd = fs.openSync(temp, 'wx');
    if (typeof chunks === 'string') writeAll(fs, fd, chunks);
    else for (const chunk of chunks) if (chunk.length > 0) writeAll(fs, fd, chunk);
    fs.fsyncSync(fd);
    fs.closeSync(fd);
    fd = null;
    return temp;
  } catch (e) {
    if (fd !== null) {
      try {
        fs.closeSync(fd);
      } catch {
        /* already failing; the original error is the one to report */
      }
    }
    try {
      fs.unlinkSync(temp);
    } catch {
      /* the temporary file may never have been created */
    }
    throw e;
  }
}

/**
 * writeSync may write fewer bytes than asked (a full disk can take part of a chunk before it
 * fails, a pipe or network file system takes what fits); the rest is written until all is.
 */
function writeAll(fs: AtomicFs, fd: number, text: string): void {
  let buf = Buffer.from(text, 'utf8');
  while (buf.length > 0) {
    const n = fs.writeSync(fd, buf);
    if (!(n > 0)) throw Object.assign(new Error('write made no progress'), { code: 'EIO' });
    buf = buf.subarray(n);
  }
}
