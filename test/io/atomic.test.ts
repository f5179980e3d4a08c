import { spawnSync } from 'node:child_process';
import { chmodSync, existsSync, mkdirSync, mkdtempSync, readFileSync, readdirSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { afterEach, beforeEach, describe, expect, it } from 'vitest';
import { WriteError, writeFileAtomic, writeFilesAtomic } from '../../src/io/atomic.js';

let dir: string;
beforeEach(() => {
  dir = mkdtempSync(path.join(tmpdir(), 'zoneplan-atomic-'));
});
afterEach(() => {
  chmodSync(dir, 0o755);
  rmSync(dir, { recursive: true, force: true });
});

function writeError(f: () => void): WriteError {
  try {
    f();
  } catch (e) {
    if (e instanceof WriteError) return e;
    throw new Error(`expected a WriteError, got ${String(e)}`);
  }
  throw new Error('expected a WriteError, but the write succeeded');
}

describe('writeFileAtomic', () => {
  it('writes a string and leaves only the target', () => {
    const target = path.join(dir, 'plan.geojson');
    writeFileAtomic(target, '{"type":"FeatureCollection","features":[]}\n');
    expect(readFileSync(target, 'utf8')).toBe('{"type":"FeatureCollection","features":[]}\n');
    expect(readdirSync(dir)).toEqual(['plan.geojson']);
  });

  it('writes chunks in order, UTF-8, replacing an old file whole', () => {
    const target = path.join(dir, 'assignments.csv');
    writeFileSync(target, 'old content that is longer than the new one\n');
    writeFileAtomic(target, ['stop_id,zone\n', '', 'Zoë,1\n', '📦,2\n']);
    expect(readFileSync(target, 'utf8')).toBe('stop_id,zone\nZoë,1\n📦,2\n');
    expect(readdirSync(dir)).toEqual(['assignments.csv']);
  });

  it('into a missing folder: WriteError ENOENT, nothing created', () => {
    const target = path.join(dir, 'no-such-folder', 'plan.geojson');
    const e = writeError(() => writeFileAtomic(target, 'x'));
    expect(e.code).toBe('ENOENT');
    expect(e.target).toBe(target);
    expect(e.message).toBe(`cannot write ${target}: the folder does not exist; nothing was written there`);
    expect(existsSync(path.dirname(target))).toBe(false);
    expect(readdirSync(dir)).toEqual([]);
  });

  it('under a path part that is a file: WriteError ENOTDIR', () => {
    writeFileSync(path.join(dir, 'file'), 'x');
    const target = path.join(dir, 'file', 'plan.geojson');
    const e = writeError(() => writeFileAtomic(target, 'x'));
    expect(e.code).toBe('ENOTDIR');
    expect(e.message).toMatch(/a part of the path is not a folder; nothing was written there$/);
    expect(readdirSync(dir)).toEqual(['file']);
  });

  it('onto a folder: WriteError EISDIR, the folder kept and no temporary file left', () => {
    const target = path.join(dir, 'out');
    mkdirSync(target);
    const e = writeError(() => writeFileAtomic(target, 'x'));
    expect(e.code).toBe('EISDIR');
    expect(e.message).toBe(`cannot write ${target}: the destination is a folder; nothing was written there`);
    expect(readdirSync(dir)).toEqual(['out']);
    expect(readdirSync(target)).toEqual([]);
  });

  it('into a read-only folder: WriteError EACCES, old file unchanged, no temporary file', () => {
    const target = path.join(dir, 'plan.geojson');
    writeFileSync(target, 'old plan\n');
    chmodSync(dir, 0o555);
    let result: { name: string; code: string; message: string };
    if (process.getuid?.() !== 0) {
      const e = writeError(() => writeFileAtomic(target, 'new plan\n'));
      result = { name: e.name, code: e.code, message: e.message };
    } else {
      // Folder permissions do not bind root (POSIX: appropriate privileges), so the write is
      // tried by a child process running as the unprivileged user "nobody".
      const atomic = fileURLToPath(new URL('../../src/io/atomic.ts', import.meta.url));
      const script = path.join(tmpdir(), `zoneplan-atomic-child-${process.pid}.mjs`);
      writeFileSync(
        script,
        `const { writeFileAtomic } = await import(${JSON.stringify(atomic)});
         try { writeFileAtomic(process.argv[2], 'new plan\\n'); console.log(JSON.stringify({ name: 'none', code: '', message: '' })); }
         catch (e) { console.log(JSON.stringify({ name: e.name, code: e.code, message: e.message })); }`,
      );
      try {
        const child = spawnSync(process.execPath, ['--import', 'tsx', script, target], {
          uid: 65534,
          gid: 65534,
          cwd: fileURLToPath(new URL('../..', import.meta.url)),
          encoding: 'utf8',
          timeout: 30_000,
        });
        expect(child.status, child.stderr).toBe(0);
        result = JSON.parse(child.stdout) as typeof result;
      } finally {
        rmSync(script, { force: true });
      }
    }
    expect(result).toEqual({ name: 'WriteError', code: 'EACCES', message: `cannot write ${target}: permission denied; nothing was written there` });
    expect(readFileSync(target, 'utf8')).toBe('old plan\n');
    expect(readdirSync(dir)).toEqual(['plan.geojson']);
  });

  it('when the chunk producer throws half way: the error passes, old file unchanged, no temporary file', () => {
    const target = path.join(dir, 'plan.geojson');
    writeFileSync(target, 'old plan\n');
    let produced = 0;
    function* chunks(): Generator<string> {
      yield '{"type":"FeatureCollection","features":[\n';
      produced++;
      // Big enough to have reached the temporary file.
      yield `${'x'.repeat(1 << 20)}\n`;
      produced++;
      throw new RangeError('the solver gave up');
    }
    expect(() => writeFileAtomic(target, chunks())).toThrow(new RangeError('the solver gave up'));
    expect(produced).toBe(2);
    expect(readFileSync(target, 'utf8')).toBe('old plan\n');
    expect(readdirSync(dir)).toEqual(['plan.geojson']);
  });

  it('when the producer throws an error with an errno code: WriteError, old file unchanged', () => {
    const target = path.join(dir, 'plan.geojson');
    writeFileSync(target, 'old plan\n');
    function* chunks(): Generator<string> {
      yield 'part';
      throw Object.assign(new Error('no space left on device, write'), { code: 'ENOSPC' });
    }
    const e = writeError(() => writeFileAtomic(target, chunks()));
    expect(e.code).toBe('ENOSPC');
    expect(e.message).toBe(`cannot write ${target}: the disk is full; nothing was written there`);
    expect(readFileSync(target, 'utf8')).toBe('old plan\n');
    expect(readdirSync(dir)).toEqual(['plan.geojson']);
  });
});

describe('writeFilesAtomic: files that belong together', () => {
  it('writes every file, and only then replaces the old ones', () => {
    const a = path.join(dir, 'plan.geojson');
    const b = path.join(dir, 'assignments.csv');
    writeFileSync(a, 'old plan\n');
    writeFilesAtomic([
      { target: a, chunks: ['new ', 'plan\n'] },
      { target: b, chunks: 'stop_id,zone\n' },
    ]);
    expect(readFileSync(a, 'utf8')).toBe('new plan\n');
    expect(readFileSync(b, 'utf8')).toBe('stop_id,zone\n');
    expect(readdirSync(dir).sort()).toEqual(['assignments.csv', 'plan.geojson']);
  });

  it('when the second cannot be written: neither is replaced or created, no temporary file left', () => {
    const a = path.join(dir, 'plan.geojson');
    const b = path.join(dir, 'missing', 'assignments.csv');
    writeFileSync(a, 'old plan\n');
    const e = writeError(() =>
      writeFilesAtomic([
        { target: a, chunks: 'new plan\n' },
        { target: b, chunks: 'stop_id,zone\n' },
      ]),
    );
    expect(e.message).toContain(b);
    expect(readFileSync(a, 'utf8')).toBe('old plan\n');
    expect(readdirSync(dir)).toEqual(['plan.geojson']);
  });

  it('when the first producer throws: the second is not written either', () => {
    const a = path.join(dir, 'plan.geojson');
    const b = path.join(dir, 'assignments.csv');
    function* failing(): Generator<string> {
      yield 'half';
      throw new Error('producer failed');
    }
    expect(() =>
      writeFilesAtomic([
        { target: a, chunks: failing() },
        { target: b, chunks: 'stop_id,zone\n' },
      ]),
    ).toThrow('producer failed');
    expect(readdirSync(dir)).toEqual([]);
  });
});
