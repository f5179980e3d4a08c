/**
 * The hostile-input corpus (test/fixtures/hostile, made by its make.ts, outcomes in its
 * manifest.json) through the API (readStopsFile, readDepotsFile, readCapacityFile,
 * readLocksFile, readServiceAreaFile) and through the command line as a child process:
 *
 * - error: an ImportError whose first problem has the manifest's code and names the file, the
 *   row (CSV, header = row 1) or feature (GeoJSON, 0-based) and the field; the CLI exits 2, prints
 *   that place and field, shows no stack trace, and writes no output file (--out and
 *   --assignments point into an empty temporary folder, which must stay empty).
 * - import / warning: read with the stated number of records (and the warning's code); the CLI
 *   exits 0.
 * - planError: the file reads, but --zones 5 cannot be planned on it: exit 2, a message, nothing written.
 *
 * Plus a 10 MB single-line file made here (not committed).
 */
import { readFileSync, readdirSync, writeFileSync } from 'node:fs';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { readStopsFile } from '../../src/io/read.js';
import { readCapacityFile, readDepotsFile, readLocksFile, readServiceAreaFile } from '../../src/io/zone-files.js';
import { ImportError, type Problem } from '../../src/io/problems.js';
import { planStopsFile } from '../../src/api/plan-file.js';
import { EXIT_OK, main } from '../../src/cli/main.js';
import { HOSTILE_DIR, hostileCases, type HostileCase } from '../fixtures/hostile/make.js';
import { STACK_LINE, buildCli, expectCleanRefusal, runCli, strayFiles, tempDir } from './support.js';

const manifest = JSON.parse(readFileSync(path.join(HOSTILE_DIR, 'manifest.json'), 'utf8')) as HostileCase[];
const fixture = (name: string): string => path.join(HOSTILE_DIR, name);
const BASE = fixture('base-stops.csv');
const BASE_IDS = readStopsFile(BASE).ids;
const NAMES = { count: 5, depotIds: [] as string[] };

const tmp = tempDir('hostile');
let cli: Awaited<ReturnType<typeof buildCli>>;
beforeAll(async () => {
  cli = await buildCli();
});
afterAll(() => {
  cli?.cleanup();
  tmp.cleanup();
});

/** What the reader for this kind of file returns, reduced to a count of records and the warnings. */
function readAs(c: HostileCase, file: string): { count: number; warnings: readonly Problem[] } {
  switch (c.kind) {
    case 'stops': {
      const s = readStopsFile(file);
      return { count: s.ids.length, warnings: s.warnings };
    }
    case 'depots': {
      const d = readDepotsFile(file);
      return { count: d.ids.length, warnings: d.warnings };
    }
    case 'capacity':
      return { count: readCapacityFile(file, NAMES).filter((x) => x !== null).length, warnings: [] };
    case 'locks':
      return { count: Array.from(readLocksFile(file, BASE_IDS, NAMES)).filter((z) => z >= 0).length, warnings: [] };
    case 'service-area': {
      const a = readServiceAreaFile(file);
      return { count: a.type === 'Polygon' ? 1 : a.coordinates.length, warnings: [] };
    }
  }
}

/** "row 3, field "lat"" as the CLI prints the place of a problem. */
function placeText(c: HostileCase): string {
  const parts: string[] = [];
  if (c.row !== undefined) parts.push(`row ${c.row}`);
  if (c.feature !== undefined) parts.push(`feature ${c.feature}`);
  if (c.field) parts.push(`field "${c.field}"`);
  return parts.join(', ');
}

/** The CLI arguments that exercise this file, writing into `out`. */
function cliArgs(c: HostileCase, file: string, out: string): string[] {
  const files = ['--out', path.join(out, 'plan.geojson'), '--assignments', path.join(out, 'assignments.csv'), '--quiet'];
  switch (c.kind) {
    case 'stops':
      return ['plan', file, '--zones', '5', ...files];
    case 'depots':
      return ['plan', BASE, '--zones', '5', '--depots', file, ...files];
    case 'capacity':
      return ['plan', BASE, '--zones', '5', '--capacity-file', file, ...files];
    case 'locks':
      return ['plan', BASE, '--zones', '5', '--locks', file, ...files];
    case 'service-area':
      return ['plan', BASE, '--zones', '3', '--service-area', file, ...files];
  }
}

describe('the hostile corpus', () => {
  it('has at least 40 files of every kind, each in the manifest, each made by make.ts byte for byte', () => {
    const onDisk = readdirSync(HOSTILE_DIR).filter((f) => !['make.ts', 'manifest.json', 'README.md', 'base-stops.csv', '.gitattributes'].includes(f));
    expect(onDisk.sort()).toEqual(manifest.map((c) => c.file).sort());
    expect(manifest.length).toBeGreaterThanOrEqual(40);
    const kinds = new Map<string, number>();
    for (const c of manifest) kinds.set(`${c.kind} ${path.extname(c.file)}`, (kinds.get(`${c.kind} ${path.extname(c.file)}`) ?? 0) + 1);
    for (const k of ['stops .csv', 'stops .geojson', 'depots .csv', 'service-area .geojson']) expect(kinds.get(k) ?? 0, k).toBeGreaterThanOrEqual(3);
    // The generator and the committed bytes agree (an editor or git must not have changed them).
    const made = hostileCases();
    expect(made.map((x) => x.c)).toEqual(manifest);
    for (const { c, bytes } of made) expect(Buffer.compare(readFileSync(fixture(c.file)), bytes), c.file).toBe(0);
  });

  for (const c of manifest) {
    describe(`${c.file}: ${c.breaks}`, () => {
      const file = fixture(c.file);

      it(`API: ${c.expect}${c.code ? ` ${c.code}` : ''}`, () => {
        let got: ReturnType<typeof readAs> | null = null;
        let error: unknown = null;
        try {
          got = readAs(c, file);
        } catch (e) {
          error = e;
        }
        if (c.expect === 'error') {
          expect(error, 'must be refused with an ImportError').toBeInstanceOf(ImportError);
          const e = error as ImportError;
          expect(e.file).toBe(file);
          const p = e.problems[0]!;
          expect({ code: p.code, row: p.row, feature: p.feature, field: p.field ?? null }).toEqual({ code: c.code, row: c.row, feature: c.feature, field: c.field ?? null });
          expect(p.message).toMatch(new RegExp(c.message!));
          for (const q of e.problems) {
            expect(q.file).toBe(file);
            expect(q.severity).toBe('error');
            // Every problem about a record names where it is and what field.
            if (q.row !== undefined || q.feature !== undefined) expect(q.field === undefined && c.field !== null ? q : 'ok').toBe('ok');
            if (q.value !== undefined) expect(q.value.length).toBeLessThanOrEqual(60 + 6 * 3);
            expect(`${q.message}${q.value ?? ''}${q.field ?? ''}`).not.toMatch(/[\u001b\u0000]/);
          }
        } else {
          if (error) throw error;
          expect(got!.count).toBe(c.count);
          for (const w of got!.warnings) expect(w.file).toBe(file);
          if (c.expect === 'warning') {
            const w = got!.warnings.find((x) => x.code === c.code);
            expect(w, `warning ${c.code} among ${got!.warnings.map((x) => x.code).join(', ')}`).toBeDefined();
            if (c.message) expect(w!.message).toMatch(new RegExp(c.message));
          } else if (c.kind === 'stops') expect(got!.warnings.map((x) => x.code)).toEqual([]);
        }
      });

      if (c.planError) {
        it('API: planning 5 zones is refused with a clear message', async () => {
          await expect(planStopsFile(file, {}, { zones: 5 })).rejects.toThrow(new RegExp(c.planError!));
        });
      }

      it(`CLI: ${c.expect === 'error' || c.planError ? 'exit 2, place and field named, no stack trace, nothing written' : 'exit 0'}`, async () => {
        const out = path.join(tmp.dir, c.file.replace(/\W/g, '_'));
        const { mkdirSync } = await import('node:fs');
        mkdirSync(out);
        const wantsPlan = c.expect === 'error' || c.planError !== undefined || c.kind !== 'stops';
        const args = wantsPlan ? cliArgs(c, file, out) : ['check', file];
        const run = await runCli(cli.command, args);
        const label = `zoneplan ${args.join(' ')}`;
        if (c.expect === 'error') {
          expectCleanRefusal(run, [path.join(out, 'plan.geojson'), path.join(out, 'assignments.csv')], label);
          const place = placeText(c);
          expect(run.stderr).toContain(`error: ${file}: ${place}`);
          expect(run.stderr).toMatch(/nothing was imported or written/);
          expect(run.stderr).not.toMatch(/[\u001b\u0000]/);
        } else if (c.planError) {
          expectCleanRefusal(run, [path.join(out, 'plan.geojson'), path.join(out, 'assignments.csv')], label);
          expect(run.stderr).toMatch(new RegExp(c.planError));
        } else {
          expect(run.code, `${label}\n${run.stderr}`).toBe(EXIT_OK);
          expect(`${run.stdout}${run.stderr}`).not.toMatch(STACK_LINE);
        }
        // Nothing half-written: only complete outputs, no temporary files.
        expect(strayFiles(out, run.code === 0 ? ['plan.geojson', 'assignments.csv'] : [])).toEqual([]);
      });
    });
  }

  it('check (in-process) reports every stops file the same way: exit 2 on errors, 0 otherwise', async () => {
    for (const c of manifest.filter((x) => x.kind === 'stops')) {
      let err = '';
      const code = await main(['check', fixture(c.file)], { out: () => {}, err: (s) => void (err += s), isTty: false });
      expect(code, `${c.file}\n${err}`).toBe(c.expect === 'error' ? 2 : 0);
      expect(err).not.toMatch(STACK_LINE);
    }
  });
});

describe('a 10 MB single line (made here, not committed)', () => {
  it('as a header with a million columns: refused naming row 1, with a short message', async () => {
    const file = tmp.file('one-line-10mb.csv');
    writeFileSync(file, 'name,'.repeat(2 * 1024 * 1024));
    let error: unknown;
    try {
      readStopsFile(file);
    } catch (e) {
      error = e;
    }
    expect(error).toBeInstanceOf(ImportError);
    const p = (error as ImportError).problems[0]!;
    expect([p.code, p.row]).toEqual(['header', 1]);
    expect(p.message.length).toBeLessThan(600);
    expect(p.message).toMatch(/2097153 columns/);
    const out = tmp.file('one-line-out');
    const run = await runCli(cli.command, ['plan', file, '--zones', '5', '--out', `${out}.geojson`]);
    expectCleanRefusal(run, [`${out}.geojson`], 'plan one-line-10mb.csv');
    expect(run.stderr.length).toBeLessThan(2000);
  });

  it('as one 10 MB cell after the header: refused naming row 2 and the field, the value cut short', () => {
    const file = tmp.file('one-cell-10mb.csv');
    writeFileSync(file, `id,lat,lon\nA,${'9'.repeat(10 * 1024 * 1024)},13.4\n`);
    let error: unknown;
    try {
      readStopsFile(file);
    } catch (e) {
      error = e;
    }
    expect(error).toBeInstanceOf(ImportError);
    const p = (error as ImportError).problems[0]!;
    // 10 million nines overflow to Infinity.
    expect([p.code, p.row, p.field]).toEqual(['bad-coordinate', 2, 'lat']);
    expect(p.value!.length).toBeLessThanOrEqual(60);
  });
});
