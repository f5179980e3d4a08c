/**
 * Files that are not (usable) Zoneplan projects get a clear message, exit code 2 on the command
 * line and no stack trace: not a project, newer format, damaged (PRAGMA integrity_check,
 * https://www.sqlite.org/pragma.html#pragma_integrity_check, and our own checksums of the
 * arrays), missing, already there; disk full and read-only places in the words of src/io/atomic.ts.
 */
import Database from 'better-sqlite3';
import { copyFileSync, existsSync, openSync, readFileSync, closeSync, statSync, writeFileSync, writeSync } from 'node:fs';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createProject, getProjectInfo, listPlans, loadPlan, savePlanToProject } from '../../src/api/project.js';
import { main } from '../../src/cli/main.js';
import { WriteError } from '../../src/io/atomic.js';
import { arrayBytes } from '../../src/store/codec.js';
import { explainStoreError, ProjectError } from '../../src/store/errors.js';
import { APPLICATION_ID, SCHEMA_VERSION } from '../../src/store/index.js';
import { capture, tempDir } from './support.js';
import { solvedOf, syntheticPlan, syntheticStops } from './synthetic.js';

const tmp = tempDir('open-errors');
afterAll(() => tmp.cleanup());

async function cli(args: string[]): Promise<{ code: number; out: string; err: string }> {
  const io = capture();
  const code = await main(args, io);
  return { code, out: io.stdout(), err: io.stderr() };
}

/** The command line refuses the file with exit 2 and this one message, no stack trace. */
async function expectCliRefusal(file: string, message: string | RegExp): Promise<void> {
  const r = await cli(['plans', file]);
  expect(r.code).toBe(2);
  expect(r.out).toBe('');
  if (typeof message === 'string') expect(r.err).toBe(`error: ${message}\n`);
  else expect(r.err).toMatch(message);
  expect(r.err).not.toMatch(/\n\s+at /);
  expect(r.err).not.toContain('internal error');
}

describe('files that are not Zoneplan projects', () => {
  const cases: [string, (file: string) => void, string][] = [
    ['a text file', (f) => writeFileSync(f, 'id,lat,lon\n1,48.1,11.5\n'), 'it is not an SQLite database'],
    ['an empty file', (f) => writeFileSync(f, ''), 'the file is empty'],
    [
      "another program's SQLite database",
      (f) => {
        const db = new Database(f);
        db.exec('CREATE TABLE notes (body TEXT)');
        db.close();
      },
      'an SQLite database of another program',
    ],
    [
      'an SQLite database with another application id',
      (f) => {
        const db = new Database(f);
        db.pragma('application_id = 1196444487'); // 0x47504B47, "GPKG": OGC GeoPackage (SQLite's magic.txt)
        db.exec('CREATE TABLE gpkg_contents (table_name TEXT)');
        db.close();
      },
      'an SQLite database of another program, application id 0x47504b47',
    ],
  ];
  for (const [what, make, why] of cases) {
    it(`refuses ${what} and leaves it as it was`, async () => {
      const file = tmp.file(`${what.replace(/\W+/g, '-')}.zoneplan`);
      make(file);
      const bytes = readFileSync(file);
      const message = `${file} is not a Zoneplan project (${why})`;
      await expect(getProjectInfo(file)).rejects.toMatchObject({ name: 'ProjectError', code: 'not-a-project', message });
      await expect(savePlanToProject(file, solvedOf(syntheticStops(10, 1), syntheticPlan(syntheticStops(10, 1), 2, 1)), 'x')).rejects.toMatchObject({ code: 'not-a-project' });
      await expectCliRefusal(file, message);
      expect(readFileSync(file)).toEqual(bytes);
      for (const leftover of ['-wal', '-shm', '.lock']) expect(existsSync(file + leftover)).toBe(false);
    });
  }

  it('says when the file does not exist', async () => {
    const file = tmp.file('missing.zoneplan');
    await expect(listPlans(file)).rejects.toMatchObject({ code: 'no-such-file', message: `${file} does not exist` });
    await expectCliRefusal(file, `${file} does not exist`);
    expect(existsSync(file)).toBe(false);
  });
});

describe('a project from a newer Zoneplan', () => {
  it('is refused with the versions named, and not changed', async () => {
    const file = tmp.file('newer.zoneplan');
    await createProject(file);
    const db = new Database(file);
    db.pragma(`user_version = ${SCHEMA_VERSION + 1}`);
    db.close();
    const bytes = readFileSync(file);
    const message = `${file} was saved by a newer Zoneplan (project format ${SCHEMA_VERSION + 1}; this Zoneplan reads up to format ${SCHEMA_VERSION}); update Zoneplan to open it`;
    await expect(listPlans(file)).rejects.toMatchObject({ code: 'newer-version', message });
    await expect(savePlanToProject(file, solvedOf(syntheticStops(10, 1), syntheticPlan(syntheticStops(10, 1), 2, 1)), 'x')).rejects.toMatchObject({ code: 'newer-version' });
    await expectCliRefusal(file, message);
    expect(readFileSync(file)).toEqual(bytes);
  });
});

describe('a damaged project', () => {
  const good = tmp.file('good.zoneplan');
  const stops = syntheticStops(5000, 3);
  const plans = [3, 5, 7].map((k) => syntheticPlan(stops, k, k));

  beforeAll(async () => {
    await createProject(good);
    for (const p of plans) await savePlanToProject(good, solvedOf(stops, p), `k${p.zoneIds.length}`);
    expect(statSync(good).size).toBeGreaterThan(100_000);
  });

  it('is refused on open when bytes in the middle of the file were overwritten', async () => {
    const file = tmp.file('overwritten.zoneplan');
    copyFileSync(good, file);
    const size = statSync(file).size;
    const page = 4096; // SQLite's default page size (https://www.sqlite.org/pragma.html#pragma_page_size)
    const at = Math.floor(size / page / 2) * page;
    const fd = openSync(file, 'r+');
    writeSync(fd, Buffer.alloc(3 * page, 0xa5), 0, 3 * page, at);
    closeSync(fd);
    const bytes = readFileSync(file);
    const damaged = new RegExp(`^${file.replace(/[.*+?^${}()|[\]\\]/g, '\\$&')} is damaged \\(SQLite integrity check: .+\\); it was not changed\\. Open a backup copy, or ask for help recovering it$`);
    await expect(getProjectInfo(file)).rejects.toMatchObject({ name: 'ProjectError', code: 'damaged', message: expect.stringMatching(damaged) });
    await expectCliRefusal(file, new RegExp(`^error: ${damaged.source.slice(1, -1)}\\n$`));
    expect(readFileSync(file)).toEqual(bytes);
    expect(existsSync(`${file}.lock`)).toBe(false);
    // The file it was copied from is fine.
    expect((await listPlans(good)).map((p) => p.name)).toEqual(['k3', 'k5', 'k7']);
  });

  it('is caught by the plan checksum where SQLite sees nothing wrong (a changed byte inside an array)', async () => {
    const file = tmp.file('flipped.zoneplan');
    copyFileSync(good, file);
    const bytes = readFileSync(file);
    const centres = arrayBytes(plans[1]!.centres);
    const at = bytes.indexOf(centres);
    expect(at).toBeGreaterThan(0);
    bytes[at + 40]! ^= 0x01; // one bit of one centre's coordinate
    writeFileSync(file, bytes);
    expect((await listPlans(file)).map((p) => p.name)).toEqual(['k3', 'k5', 'k7']); // structure fine: opens and lists
    await expect(loadPlan(file, 'k5')).rejects.toMatchObject({ code: 'damaged', message: `${file} is damaged: plan "k5" does not match its checksum` });
    expect((await loadPlan(file, 'k7')).plan.centres).toEqual(plans[2]!.centres);
    const r = await cli(['export', file, '--plan', 'k5', '--assignments', tmp.file('k5.csv')]);
    expect(r.code).toBe(2);
    expect(r.err).toBe(`error: ${file} is damaged: plan "k5" does not match its checksum\n`);
    expect(existsSync(tmp.file('k5.csv'))).toBe(false);
  });

  it('is caught by the stop set checksum when a stop id changed', async () => {
    const file = tmp.file('renamed-stop.zoneplan');
    copyFileSync(good, file);
    const bytes = readFileSync(file);
    const at = bytes.indexOf(Buffer.from('\nS-3-2500\n'));
    expect(at).toBeGreaterThan(0);
    bytes[at + 3] = '4'.charCodeAt(0); // S-4-2500: still a valid id, same length
    writeFileSync(file, bytes);
    await expect(loadPlan(file, 'k3')).rejects.toMatchObject({ code: 'damaged', message: `${file} is damaged: stop set 1 does not match its checksum` });
  });
});

describe('making a project', () => {
  it('never overwrites a file', async () => {
    const file = tmp.file('taken.csv');
    writeFileSync(file, 'id,lat,lon\n');
    await expect(createProject(file)).rejects.toMatchObject({ code: 'exists', message: `${file} already exists; choose another name (a project is never overwritten)` });
    const r = await cli(['project', 'new', file]);
    expect(r.code).toBe(2);
    expect(r.err).toBe(`error: ${file} already exists; choose another name (a project is never overwritten)\n`);
    expect(readFileSync(file, 'utf8')).toBe('id,lat,lon\n');
  });

  it('refuses a WAL file left over from an earlier file of the same name', async () => {
    const file = tmp.file('ghost.zoneplan');
    writeFileSync(`${file}-wal`, 'old');
    await expect(createProject(file)).rejects.toMatchObject({ code: 'exists', message: `${file}-wal is left over from an earlier file named ghost.zoneplan; move or delete it first` });
    expect(existsSync(file)).toBe(false);
  });

  it('writes the header: application id and format', async () => {
    const file = tmp.file('header.zoneplan');
    const r = await cli(['project', 'new', file]);
    expect(r).toEqual({ code: 0, out: `created project ${file} (project format ${SCHEMA_VERSION})\n`, err: '' });
    const header = readFileSync(file).subarray(0, 100);
    // SQLite file format: "SQLite format 3\0" at 0, user_version at 60, application id at 68, big-endian
    // (https://www.sqlite.org/fileformat2.html#the_database_header).
    expect(header.subarray(0, 16).toString('latin1')).toBe('SQLite format 3\0');
    expect(header.readUInt32BE(60)).toBe(SCHEMA_VERSION);
    expect(header.readUInt32BE(68)).toBe(APPLICATION_ID);
    expect(header.subarray(68, 72).toString('latin1')).toBe('ZPLN');
    expect(existsSync(`${file}.lock`)).toBe(false);
  });
});

describe('write errors from SQLite', () => {
  const sqlite = (code: string, message = 'x'): Error => Object.assign(new Error(message), { code, name: 'SqliteError' });
  it('read as the write errors of src/io/atomic.ts', () => {
    const full = explainStoreError('p.zoneplan', sqlite('SQLITE_FULL', 'database or disk is full'));
    expect(full).toBeInstanceOf(WriteError);
    expect((full as WriteError).message).toBe('cannot write p.zoneplan: the disk is full; nothing was written there');
    const io = explainStoreError('p.zoneplan', sqlite('SQLITE_IOERR_WRITE', 'disk I/O error'));
    expect((io as WriteError).message).toBe('cannot write p.zoneplan: disk I/O error; nothing was written there');
    const ro = explainStoreError(tmp.file('no-such-dir/p.zoneplan'), sqlite('SQLITE_READONLY', 'attempt to write a readonly database'));
    expect(ro).toBeInstanceOf(WriteError);
    const corrupt = explainStoreError('p.zoneplan', sqlite('SQLITE_CORRUPT', 'database disk image is malformed'));
    expect(corrupt).toBeInstanceOf(ProjectError);
    expect((corrupt as ProjectError).code).toBe('damaged');
    const busy = explainStoreError('p.zoneplan', sqlite('SQLITE_BUSY', 'database is locked'));
    expect((busy as ProjectError).code).toBe('busy');
    const other = new TypeError('a bug');
    expect(explainStoreError('p.zoneplan', other)).toBe(other);
  });

  it('a project in a folder that does not exist', async () => {
    const file = tmp.file('no-such-folder/p.zoneplan');
    await expect(createProject(file)).rejects.toMatchObject({ name: 'WriteError', message: `cannot write ${file}: the folder does not exist; nothing was written there` });
  });
});
