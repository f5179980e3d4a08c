/**
 * Forward migration of a format-1 project (test/fixtures/project-v1/v1.zoneplan, made by
 * make.ts there) and of a format-2 project holding manual edits (test/fixtures/project-v2) to
 * the current format: in one transaction, with a copy of the old file kept, every stop set, plan
 * and edit intact, and the new features usable on it.
 */
import Database from 'better-sqlite3';
import { copyFileSync, existsSync, readFileSync } from 'node:fs';
import path from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { writePlanFiles } from '../../src/api/plan-file.js';
import { appendEdit, createProject, getProjectInfo, listEdits, listPlans, listStopSets, loadPlan, openProject, savePlanToProject } from '../../src/api/project.js';
import { applyEdits } from '../../src/api/edited-plan.js';
import { SCHEMA_VERSION, lockPathOf } from '../../src/store/index.js';
import { fixtureContent, makeV1 } from '../fixtures/project-v1/make.js';
import { fixtureEdits, makeV2 } from '../fixtures/project-v2/make.js';
import { root, tempDir } from './support.js';

const tmp = tempDir('migrate');
afterAll(() => tmp.cleanup());
const fixture = path.join(root, 'test', 'fixtures', 'project-v1', 'v1.zoneplan');
const fixtureV2 = path.join(root, 'test', 'fixtures', 'project-v2', 'v2.zoneplan');

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

function copyOfFixture(name: string, from = fixture): string {
  const file = tmp.file(name);
  copyFileSync(from, file);
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
      message: expect.stringMatching(new RegExp(`could not be upgraded from project format 1 to ${SCHEMA_VERSION} \\(table edits already exists\\); it was not changed`)),
    });
    expect(dump(file)).toEqual(before);
    const after = new Database(file, { readonly: true });
    expect(after.pragma('journal_mode', { simple: true })).toBe('delete');
    after.close();
    expect(existsSync(lockPathOf(file))).toBe(false);
  });
});

describe('the v2 fixture', () => {
  it('is a format-2 project holding edits, and what make.ts makes', () => {
    const made = tmp.file('remade-v2.zoneplan');
    makeV2(made);
    const committed = dump(fixtureV2) as { version: number; tables: { edits: unknown[] } };
    expect(committed.version).toBe(2);
    expect(SCHEMA_VERSION).toBeGreaterThan(2);
    expect(committed.tables.edits).toHaveLength(fixtureEdits().length);
    expect(dump(made)).toEqual(committed);
  });
});

describe('migrating a v2 project with edits', () => {
  /** The edits table's rows as stored, with the plan's name instead of its id. */
  function editRows(file: string): unknown[] {
    const db = new Database(file, { readonly: true, fileMustExist: true });
    try {
      return db
        .prepare('SELECT e.id, p.name AS plan, e.kind, e.stop_index, e.stop_id, e.from_zone, e.to_zone, e.lon, e.lat, e.at FROM edits e JOIN plans p ON p.id = e.plan_id ORDER BY e.id')
        .all();
    } finally {
      db.close();
    }
  }
  const asRows = fixtureEdits().map((e) => ({ id: e.id, plan: e.plan, kind: e.kind, stop_index: e.stopIndex, stop_id: e.stopId, from_zone: e.fromZone, to_zone: e.toZone, lon: e.lon, lat: e.lat, at: e.at }));

  it('upgrades it on open, keeps a copy of the old file, and finds every edit as it was', async () => {
    const file = copyOfFixture('april.zoneplan', fixtureV2);
    expect(editRows(file)).toEqual(asRows);
    const info = await getProjectInfo(file);
    expect(info).toMatchObject({ formatVersion: SCHEMA_VERSION, migratedFrom: 2, stopSets: 1, plans: 2, edits: asRows.length });
    expect(info.backup).toBe(tmp.file('april.v2-backup.zoneplan'));
    expect(dump(info.backup!)).toEqual(dump(fixtureV2));
    const raw = new Database(file, { readonly: true });
    expect(raw.pragma('user_version', { simple: true })).toBe(SCHEMA_VERSION);
    // The rebuilt table keeps its reference to plans and its index.
    expect((raw.pragma('foreign_key_list(edits)') as { table: string; from: string; to: string }[]).map((f) => [f.table, f.from, f.to])).toEqual([['plans', 'plan_id', 'id']]);
    expect((raw.pragma('index_list(edits)') as { name: string }[]).map((i) => i.name)).toEqual(['edits_plan']);
    expect((raw.pragma('index_info(edits_plan)') as { name: string }[]).map((c) => c.name)).toEqual(['plan_id', 'id']);
    raw.close();
    // Every row, column by column, with its id.
    expect(editRows(file)).toEqual(asRows);

    // Through the Api: zones as labels (1..K), the pinned centre as a position.
    const want = fixtureEdits().filter((e) => e.plan === 'March');
    expect((await listEdits(file, 'March')).map((e) => [e.id, e.kind, e.stopIndex, e.stopId, e.fromZone, e.toZone, e.centre, e.at])).toEqual(
      want.map((e) => [e.id, e.kind, e.stopIndex, e.stopId, e.fromZone === null ? null : e.fromZone + 1, e.toZone === null ? null : e.toZone + 1, e.lon === null ? null : [e.lon, e.lat], e.at]),
    );
    expect((await listPlans(file)).map((p) => [p.name, p.edits])).toEqual([
      ['March', 5],
      ['March, 4 vans', 2],
    ]);
    // Applied on top of the plan as solved, they give what they gave before.
    const march = applyEdits(await loadPlan(file, 'March'), (await openStoreEdits(file, 'March')));
    expect(march.plan.assignment[10]).toBe(0);
    expect(march.locked[3]).toBe(-1);
    expect(Array.from(march.pinned)).toEqual([0, 1, 0]);
    expect(march.figures.zones[1]!.centreLon).toBeCloseTo(10.45, 9);
    expect(march.figures.zones[1]!.centreLat).toBeCloseTo(48.28, 9);
    expect(march.edits).toBe(5);
  });

  it('takes the new edit kind afterwards: a pinned centre is freed, a free one is not', async () => {
    const file = copyOfFixture('april-2.zoneplan', fixtureV2);
    const freed = await appendEdit(file, 'March', { kind: 'unpin-centre', zone: 2 });
    expect(freed).toMatchObject({ id: asRows.length + 1, kind: 'unpin-centre', stopIndex: null, toZone: 2, centre: null });
    await expect(appendEdit(file, 'March', { kind: 'unpin-centre', zone: 2 })).rejects.toMatchObject({ code: 'bad-edit', message: expect.stringMatching(/is not pinned/) });
    await expect(appendEdit(file, 'March', { kind: 'unpin-centre', zone: 1 })).rejects.toMatchObject({ code: 'bad-edit', message: expect.stringMatching(/is not pinned/) });
    const back = await appendEdit(file, 'March, 4 vans', { kind: 'unpin-centre', zone: 4, lon: 10.8, lat: 48.1 });
    expect(back).toMatchObject({ kind: 'unpin-centre', toZone: 4, centre: [10.8, 48.1] });
    await expect(appendEdit(file, 'March', { kind: 'pin-centre', zone: 1, lon: 10.1, lat: 48.1 })).resolves.toMatchObject({ kind: 'pin-centre' });
    const march = applyEdits(await loadPlan(file, 'March'), await openStoreEdits(file, 'March'));
    expect(Array.from(march.pinned)).toEqual([1, 0, 0]);
    // The freed centre stays where it was pinned.
    expect(march.figures.zones[1]!.centreLon).toBeCloseTo(10.45, 9);
    const vans = applyEdits(await loadPlan(file, 'March, 4 vans'), await openStoreEdits(file, 'March, 4 vans'));
    expect(Array.from(vans.pinned)).toEqual([0, 0, 0, 0]);
    expect(vans.figures.zones[3]!.centreLon).toBeCloseTo(10.8, 9);
    expect(vans.figures.zones[3]!.centreLat).toBeCloseTo(48.1, 9);
    // The table's own checks hold the new kind to its shape, and the reference to plans holds.
    const raw = new Database(file);
    raw.pragma('foreign_keys = ON');
    const insert = raw.prepare('INSERT INTO edits (plan_id, kind, stop_index, stop_id, from_zone, to_zone, lon, lat, at) VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?)');
    expect(() => insert.run(1, 'unpin-centre', 3, 'V1-003', null, 1, null, null, 'x')).toThrow(/CHECK constraint failed/);
    expect(() => insert.run(1, 'unpin-centre', null, null, null, 1, 10, null, 'x')).toThrow(/CHECK constraint failed/);
    expect(() => insert.run(1, 'teleport', null, null, null, 1, null, null, 'x')).toThrow(/CHECK constraint failed/);
    expect(() => insert.run(99, 'unpin-centre', null, null, null, 1, null, null, 'x')).toThrow(/FOREIGN KEY constraint failed/);
    raw.close();
  });

  it('ends with the schema of a new project', async () => {
    const migrated = copyOfFixture('april-3.zoneplan', fixtureV2);
    await getProjectInfo(migrated);
    const fresh = tmp.file('fresh-2.zoneplan');
    await createProject(fresh);
    expect((dump(migrated) as { schema: unknown }).schema).toEqual((dump(fresh) as { schema: unknown }).schema);
  });

  it('is one transaction: a step that fails leaves the file at format 2 with its edits, unchanged', async () => {
    const file = copyOfFixture('april-4.zoneplan', fixtureV2);
    // A table in the way of the new edits table makes the step fail after nothing else was done.
    const raw = new Database(file);
    raw.exec('CREATE TABLE edits_v3 (x)');
    raw.close();
    const before = dump(file);
    await expect(getProjectInfo(file)).rejects.toMatchObject({
      name: 'ProjectError',
      code: 'cannot-upgrade',
      message: expect.stringMatching(new RegExp(`could not be upgraded from project format 2 to ${SCHEMA_VERSION} \\(table edits_v3 already exists\\); it was not changed`)),
    });
    expect(dump(file)).toEqual(before);
    expect(editRows(file)).toEqual(asRows);
    expect(existsSync(lockPathOf(file))).toBe(false);
  });
});

/** A plan's edits as the store keeps them (zones as indices), for applyEdits. */
async function openStoreEdits(file: string, plan: string) {
  const h = await openProject(file, { readOnly: true });
  try {
    return h.store.listEdits(plan);
  } finally {
    await h.close();
  }
}
