/**
 * Forward migration of a format-1 project (test/fixtures/project-v1/v1.zoneplan, made by
 * make.ts there) to the current format: in one transaction, with a copy of the old file kept,
 * every stop set and plan intact, and the new features usable on it.
 */
import Database from 'better-sqlite3';
import { copyFileSync, existsSync, readFileSync } from 'node:fs';
import path from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { writePlanFiles } from '../../src/api/plan-file.js';
import { appendEdit, createProject, getProjectInfo, listEdits, listPlans, listStopSets, loadPlan, savePlanToProject } from '../../src/api/project.js';
import { SCHEMA_VERSION, lockPathOf } from '../../src/store/index.js';
import { fixtureContent, makeV1 } from '../fixtures/project-v1/make.js';
import { root, tempDir } from './support.js';

const tmp = tempDir('migrate');
afterAll(() => tmp.cleanup());
const fixture = path.join(root, 'test', 'fixtures', 'project-v1', 'v1.zoneplan');

/** Everything in a database, for comparing two files: header fields, schema and every row. */
function dump(file: string): unknown {
  const db = new Database(file, { readonly: true, fileMustExist: true });
  try {
    const schema = db.prepare("SELECT type, name, tbl_name, sql FROM sqlite_master WHERE name NOT LIKE 'sqlite_%' ORDER BY name").all() as { type: string; name: string }[];
    const tables: Record<string, unknown[]> = {};
    // Table names come from the file's own schema, compared in the test only.
    for (const t of schema.filter((s) => s.type === 'table')) tables[t.name] = db.prepare(`SELECT * FROM "${t.name}" ORDER BY rowid`).all();
    return { applicationId: db.pragma('application_id', { simple: true }), version: db.pragma('user_version', { simple: true }), schema, tables };
  } finally {
    db.close();
  }
}

function copyOfFixture(name: string): string {
  const file = tmp.file(name);
  copyFileSync(fixture, file);
  return file;
}

describe('the v1 fixture', () => {
  it('is a format-1 project, and what make.ts makes', () => {
    const made = tmp.file('remade-v1.zoneplan');
    makeV1(made);
    const committed = dump(fixture) as { version: number };
    expect(committed.version).toBe(1);
    expect(SCHEMA_VERSION).toBeGreaterThan(1);
    expect(dump(made)).toEqual(committed);
  });
});

describe('migrating a v1 project', () => {
  it('upgrades it on open, keeps a copy of the old file, and loads every plan as it was', async () => {
    const file = copyOfFixture('march.zoneplan');
    const info = await getProjectInfo(file);
    expect(info).toMatchObject({ formatVersion: SCHEMA_VERSION, migratedFrom: 1, stopSets: 1, plans: 2, edits: 0, created: '2025-03-03T08:29:00.000Z', createdBy: 'zoneplan 0.1.0' });
    expect(info.backup).toBe(tmp.file('march.v1-backup.zoneplan'));
    // The copy is the old file as it was (an older Zoneplan can still open it).
    expect((dump(info.backup!) as { tables: unknown }).tables).toEqual((dump(fixture) as { tables: unknown }).tables);
    expect((dump(info.backup!) as { version: number }).version).toBe(1);
    const raw = new Database(file, { readonly: true });
    expect(raw.pragma('user_version', { simple: true })).toBe(SCHEMA_VERSION);
    expect(raw.pragma('journal_mode', { simple: true })).toBe('wal');
    raw.close();
    expect(existsSync(lockPathOf(file))).toBe(false);

    const want = fixtureContent();
    const stopSets = await listStopSets(file);
    expect(stopSets).toEqual([
      { id: 1, source: want.stopSet.source, format: 'csv', imported: want.stopSet.importedAt, stops: 40, fields: want.stopSet.fields, warnings: want.stopSet.warnings },
    ]);
    const rows = await listPlans(file);
    expect(rows.map((r) => [r.name, r.created, r.zones, r.stops, r.objectiveKm2, r.parent, r.settings, r.feasible, r.hasBoundaries, r.edits])).toEqual(
      want.plans.map((p) => [p.name, p.createdAt, p.settings.zones, 40, p.objectiveKm2, null, `${p.settings.zones} zones, seed ${p.settings.seed}, 4 starts`, null, false, 0]),
    );
    for (const p of want.plans) {
      const loaded = await loadPlan(file, p.name);
      expect(loaded.stops.ids).toEqual(want.stopSet.ids);
      expect(loaded.stops.lonLat).toEqual(want.stopSet.lonLat);
      expect(loaded.stops.demand).toEqual(want.stopSet.demand);
      expect(loaded.stops.rows).toEqual(want.stopSet.rows);
      expect(loaded.plan).toMatchObject({
        centres: p.centres,
        assignment: p.assignment,
        zoneIds: Array.from({ length: p.settings.zones }, (_, j) => j + 1),
        zoneNames: new Array(p.settings.zones).fill(null),
        objectiveKm2: p.objectiveKm2,
        iterations: p.iterations,
        converged: true,
        settings: p.settings,
        fixedZones: 0,
        locked: null,
        limits: null,
        limitSettings: null,
      });
      expect(loaded.zoneStats).toBeNull();
      expect(loaded.figures.zones.reduce((s, z) => s + z.stops, 0)).toBe(40);
    }

    // Opened again: nothing more to migrate, no second copy.
    expect(await getProjectInfo(file)).toMatchObject({ migratedFrom: null, backup: null });
    expect(existsSync(tmp.file('march.v1-backup-2.zoneplan'))).toBe(false);
  });

  it('takes format-2 things afterwards: edits, rebalanced children, exports', async () => {
    const file = copyOfFixture('march-2.zoneplan');
    await appendEdit(file, 'March', { kind: 'move', stopId: 'V1-010', zone: 1 });
    expect((await listEdits(file, 'March')).map((e) => [e.kind, e.stopId, e.toZone])).toEqual([['move', 'V1-010', 1]]);
    const march = await loadPlan(file, 'March');
    await savePlanToProject(file, march, 'March again', { parent: 'March' });
    expect((await listPlans(file)).map((p) => [p.name, p.parent])).toEqual([
      ['March', null],
      ['March, 4 vans', null],
      ['March again', 'March'],
    ]);
    const out = tmp.file('march.csv');
    writePlanFiles(await loadPlan(file, 'March again'), { assignments: out });
    const lines = readFileSync(out, 'utf8').trim().split('\n');
    expect(lines).toHaveLength(41);
    expect(lines[1]).toMatch(/^V1-000,1,/);
  });

  it('ends with the schema of a new project', async () => {
    const migrated = copyOfFixture('march-3.zoneplan');
    await getProjectInfo(migrated);
    const fresh = tmp.file('fresh.zoneplan');
    await createProject(fresh);
    expect((dump(migrated) as { schema: unknown }).schema).toEqual((dump(fresh) as { schema: unknown }).schema);
  });

  it('is one transaction: a step that fails leaves the file at format 1, unchanged', async () => {
    const file = copyOfFixture('march-4.zoneplan');
    // A table in the way of the last step (CREATE TABLE edits) makes the migration fail late.
    const raw = new Database(file);
    raw.exec('CREATE TABLE edits (x)');
    raw.close();
    const before = dump(file);
    await expect(getProjectInfo(file)).rejects.toMatchObject({
      name: 'ProjectError',
      code: 'cannot-upgrade',
      message: expect.stringMatching(/could not be upgraded from project format 1 to 2 \(table edits already exists\); it was not changed/),
    });
    expect(dump(file)).toEqual(before);
    const after = new Database(file, { readonly: true });
    expect(after.pragma('journal_mode', { simple: true })).toBe('delete');
    after.close();
    expect(existsSync(lockPathOf(file))).toBe(false);
  });
});
