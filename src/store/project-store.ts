import type Database from 'better-sqlite3';
import { statSync } from 'node:fs';
import path from 'node:path';
import type { StopSet } from '../io/stopset.js';
import type { SolveSettings } from '../solve/types.js';
import { fromJson, toJson } from './codec.js';
import { ProjectError, explainStoreError } from './errors.js';
import type { ProjectLock } from './lock.js';
import { createDatabase, openDatabase } from './open.js';
import {
  planColumns,
  planFromRows,
  stopSetColumns,
  stopSetFromRows,
  zoneIdsOf,
  type PlanArraysRow,
  type PlanRow,
  type RunSummary,
  type StopSetArraysRow,
  type StopSetRow,
  type ZoneStats,
} from './rows.js';
import { editColumns, editFromRow, type EditRow } from './edits.js';
import type { EditKind, EditToAdd, PlanToSave, ProjectSummary, SavePlanOptions, StoredEdit, StoredPlan, StoredPlanInfo, StoredStopSet } from './types.js';
import { SCHEMA_VERSION } from './schema.js';

const MAX_NAME = 200;

/** A plan name as kept: trimmed; refused when empty, too long or holding control characters. */
export function planName(file: string, name: unknown): string {
  const s = typeof name === 'string' ? name.trim() : '';
  if (s === '') throw new ProjectError('a plan needs a name (e.g. "week 12" or "12 vans")', 'bad-name', file);
  if (s.length > MAX_NAME) throw new ProjectError(`plan names are at most ${MAX_NAME} characters; "${s.slice(0, 40)}..." has ${s.length}`, 'bad-name', file);
  if (/[\u0000-\u001f\u007f]/.test(s)) throw new ProjectError(`plan name ${JSON.stringify(s)} holds a control character (tab, line break, ...)`, 'bad-name', file);
  return s;
}

const PLAN_INFO = `
  SELECT p.id, p.name, p.created_at, p.stop_set_id, s.source, s.stop_count, p.zone_count, p.objective_km2,
         p.converged, p.seed, q.name AS parent, p.settings, p.request, p.fixed_zones,
         json_extract(p.limits, '$.feasible') AS feasible, p.boundaries IS NOT NULL AS has_boundaries,
         (SELECT count(*) FROM edits e WHERE e.plan_id = p.id) AS edits
  FROM plans p JOIN stop_sets s ON s.id = p.stop_set_id LEFT JOIN plans q ON q.id = p.parent_id`;

interface PlanInfoRow {
  id: number;
  name: string;
  created_at: string;
  stop_set_id: number;
  source: string;
  stop_count: number;
  zone_count: number;
  objective_km2: number;
  converged: number;
  seed: number | null;
  parent: string | null;
  settings: string;
  request: string | null;
  fixed_zones: number;
  feasible: number | null;
  has_boundaries: number;
  edits: number;
}

function infoFromRow(r: PlanInfoRow): StoredPlanInfo {
  return {
    id: r.id,
    name: r.name,
    createdAt: r.created_at,
    stopSetId: r.stop_set_id,
    source: r.source,
    stops: r.stop_count,
    zones: r.zone_count,
    objectiveKm2: r.objective_km2,
    converged: r.converged === 1,
    seed: r.seed,
    parent: r.parent,
    settings: fromJson<SolveSettings>(r.settings),
    request: r.request === null ? null : fromJson(r.request),
    feasible: r.feasible === null ? null : r.feasible === 1,
    fixedZones: r.fixed_zones,
    hasBoundaries: r.has_boundaries === 1,
    edits: r.edits,
  };
}

function stopSetInfo(r: StopSetRow): StoredStopSet {
  return {
    id: r.id,
    source: r.source,
    format: r.format === 'geojson' ? 'geojson' : 'csv',
    importedAt: r.imported_at,
    stops: r.stop_count,
    fields: JSON.parse(r.fields) as StopSet['fields'],
    warnings: JSON.parse(r.warnings) as StopSet['warnings'],
  };
}

/**
 * One open project file (better-sqlite3, synchronous). SQL text is made only of constants in this
 * file; every value is bound to a prepared statement (prepared once per connection). Every save is one transaction; every
 * statement is prepared with bound values. Open for writing it holds the file's lock until
 * close(). Errors reach the caller as ProjectError or WriteError with a message for the user.
 */
export class ProjectStore {
  private readonly statements = new Map<string, Database.Statement>();
  private readonly idsCache = new Map<number, { ids: readonly string[]; index: Map<string, number> | null }>();
  private closed = false;
  /** The file's identity when it was opened: a save checks that the path still leads to it. */
  private readonly identity: { dev: number; ino: number } | null;

  private constructor(
    readonly file: string,
    private readonly db: Database.Database,
    private readonly lock: ProjectLock | null,
    private readonly migratedFrom: number | null,
    private readonly backup: string | null,
    private readonly now: () => Date,
  ) {
    this.identity = lock ? fileIdentity(file) : null;
  }

  static create(file: string, appVersion: string, now: () => Date = () => new Date()): ProjectStore {
    const o = createDatabase(file, appVersion, now());
    return new ProjectStore(file, o.db, o.lock, null, null, now);
  }

  static open(file: string, options: { write: boolean; now?: () => Date }): ProjectStore {
    const o = openDatabase(file, options.write);
    return new ProjectStore(file, o.db, o.lock, o.migratedFrom, o.backup, options.now ?? (() => new Date()));
  }

  get writable(): boolean {
    return this.lock !== null;
  }

  /** The resolved path, for telling open projects apart. */
  get key(): string {
    return path.resolve(this.file);
  }

  private sql(text: string): Database.Statement {
    let s = this.statements.get(text);
    if (!s) {
      s = this.db.prepare(text);
      this.statements.set(text, s);
    }
    return s;
  }

  /** Runs fn, turning SQLite errors into ones for the user. */
  private guard<T>(fn: () => T): T {
    if (this.closed) throw new RangeError(`${this.file} is closed`);
    try {
      return fn();
    } catch (e) {
      throw explainStoreError(this.file, e);
    }
  }

  private needWrite(): void {
    if (!this.writable) throw new RangeError(`${this.file} is open for reading only`);
    this.checkStillThere();
  }

  /**
   * SQLite keeps writing to a file that was deleted, or renamed over by another, while it was
   * open (on Linux and macOS the open descriptor still leads to the old file): every later save
   * would "succeed" into a file nobody can open again. So a save first checks that the path
   * still names the file that was opened, and refuses with a message otherwise. What was saved
   * before stays readable through this connection, and the caller still has the plan.
   */
  private checkStillThere(): void {
    if (!this.identity) return;
    const now = fileIdentity(this.file);
    if (now && now.dev === this.identity.dev && now.ino === this.identity.ino) return;
    const what = now ? 'was replaced by another file' : 'was deleted or moved';
    throw new ProjectError(
      `${this.file} ${what} after it was opened here, so nothing was saved into it; the plan is still open here: save it into a new project, or put the file back and open it again`,
      'moved',
      this.file,
    );
  }

  close(): void {
    if (this.closed) return;
    this.closed = true;
    try {
      this.db.close(); // the last connection checkpoints the WAL and removes it
    } finally {
      this.lock?.release();
    }
  }

  summary(): ProjectSummary {
    return this.guard(() => {
      const meta = new Map((this.sql('SELECT key, value FROM meta').all() as { key: string; value: string }[]).map((r) => [r.key, r.value]));
      const counts = this.sql('SELECT (SELECT count(*) FROM stop_sets) AS stop_sets, (SELECT count(*) FROM plans) AS plans, (SELECT count(*) FROM edits) AS edits').get() as {
        stop_sets: number;
        plans: number;
        edits: number;
      };
      return {
        file: this.file,
        schemaVersion: SCHEMA_VERSION,
        createdAt: meta.get('created_at') ?? null,
        createdBy: meta.get('created_by') ?? null,
        stopSets: counts.stop_sets,
        plans: counts.plans,
        edits: counts.edits,
        migratedFrom: this.migratedFrom,
        backup: this.backup,
      };
    });
  }

  // ---- stop sets

  private insertStopSet(stops: StopSet, at: string): number {
    const c = stopSetColumns(stops);
    const id = Number(
      this.sql('INSERT INTO stop_sets (source, format, imported_at, stop_count, fields, warnings, content_hash) VALUES (?, ?, ?, ?, ?, ?, ?)').run(
        c.source,
        c.format,
        at,
        c.stop_count,
        c.fields,
        c.warnings,
        c.content_hash,
      ).lastInsertRowid,
    );
    this.sql('INSERT INTO stop_set_arrays (stop_set_id, count, ids, ids_encoding, lon_lat, demand, rows) VALUES (?, ?, ?, ?, ?, ?, ?)').run(
      id,
      c.stop_count,
      c.ids,
      c.ids_encoding,
      c.lon_lat,
      c.demand,
      c.rows,
    );
    return id;
  }

  /** Records an import: a new stop set, every time (one transaction). */
  addStopSet(stops: StopSet): StoredStopSet {
    this.needWrite();
    return this.guard(() => {
      const id = this.db.transaction(() => this.insertStopSet(stops, this.now().toISOString())).immediate();
      this.checkpoint();
      return this.stopSet(id);
    });
  }

  stopSet(id: number): StoredStopSet {
    return this.guard(() => {
      const r = this.sql('SELECT id, source, format, imported_at, stop_count, fields, warnings, content_hash FROM stop_sets WHERE id = ?').get(id) as StopSetRow | undefined;
      if (!r) throw new ProjectError(`${this.file} has no stop set ${id}`, 'no-such-plan', this.file);
      return stopSetInfo(r);
    });
  }

  listStopSets(): StoredStopSet[] {
    return this.guard(() =>
      (this.sql('SELECT id, source, format, imported_at, stop_count, fields, warnings, content_hash FROM stop_sets ORDER BY id').all() as StopSetRow[]).map(stopSetInfo),
    );
  }

  loadStopSet(id: number): StopSet {
    return this.guard(() => {
      const r = this.sql('SELECT id, source, format, imported_at, stop_count, fields, warnings, content_hash FROM stop_sets WHERE id = ?').get(id) as StopSetRow | undefined;
      const a = this.sql('SELECT count, ids, ids_encoding, lon_lat, demand, rows FROM stop_set_arrays WHERE stop_set_id = ?').get(id) as StopSetArraysRow | undefined;
      if (!r || !a) throw new ProjectError(`${this.file} has no stop set ${id}`, 'no-such-plan', this.file);
      try {
        return stopSetFromRows(r, a);
      } catch (e) {
        if (e instanceof RangeError || e instanceof SyntaxError) throw new ProjectError(`${this.file} is damaged: ${e.message}`, 'damaged', this.file);
        throw e;
      }
    });
  }

  private stopIds(stopSetId: number): readonly string[] {
    let c = this.idsCache.get(stopSetId);
    if (!c) {
      c = { ids: this.loadStopSet(stopSetId).ids, index: null };
      this.idsCache.set(stopSetId, c);
    }
    return c.ids;
  }

  /** The index of a stop id in a stop set, or -1. */
  stopIndexOf(stopSetId: number, stopId: string): number {
    this.stopIds(stopSetId);
    const c = this.idsCache.get(stopSetId)!;
    if (!c.index) c.index = new Map(c.ids.map((id, i) => [id, i]));
    return c.index.get(stopId) ?? -1;
  }

  // ---- plans

  private planId(name: string): number | null {
    const r = this.sql('SELECT id FROM plans WHERE name = ?').get(name) as { id: number } | undefined;
    return r ? r.id : null;
  }

  private noSuchPlan(name: string): ProjectError {
    const names = (this.sql('SELECT name FROM plans ORDER BY id').all() as { name: string }[]).map((r) => r.name);
    const known = names.length === 0 ? 'it has no plans yet' : `its plans: ${names.slice(0, 12).map((n) => JSON.stringify(n)).join(', ')}${names.length > 12 ? `, ... (${names.length} in all)` : ''}`;
    return new ProjectError(`${this.file} has no plan named ${JSON.stringify(name)}; ${known}`, 'no-such-plan', this.file);
  }

  private duplicate(name: string, existing: string): ProjectError {
    return new ProjectError(
      `${this.file} already has a plan named ${JSON.stringify(existing)}${existing !== name ? ` (names are compared without regard to case)` : ''}; choose another name, or rename the old plan first`,
      'duplicate-name',
      this.file,
    );
  }

  /** Throws the duplicate-name error when `name` is taken (by a plan other than `except`). */
  checkNameFree(rawName: string, except: number | null = null): string {
    const name = planName(this.file, rawName);
    return this.guard(() => {
      const r = this.sql('SELECT id, name FROM plans WHERE name = ?').get(name) as { id: number; name: string } | undefined;
      if (r && r.id !== except) throw this.duplicate(name, r.name);
      return name;
    });
  }

  /**
   * Saves a plan as a new version, in one transaction: its stop set (the same stops saved before
   * are not stored again), the plan row and its arrays.
   */
  savePlan(input: PlanToSave, rawName: string, options: SavePlanOptions = {}): StoredPlanInfo {
    this.needWrite();
    const name = planName(this.file, rawName);
    const columns = planColumns(input.plan, input.stops.ids.length, input.figures ?? null, input.result ?? null);
    const stopColumns = stopSetColumns(input.stops);
    const request = options.request === undefined || options.request === null ? null : toJson(options.request);
    const boundaries = options.boundaries === undefined || options.boundaries === null ? null : JSON.stringify(options.boundaries);
    return this.guard(() => {
      const id = this.db
        .transaction(() => {
          this.checkNameFree(name);
          let parentId: number | null = null;
          if (options.parent !== undefined && options.parent !== null) {
            parentId = this.planId(planName(this.file, options.parent));
            if (parentId === null) throw this.noSuchPlan(options.parent);
          }
          const at = this.now().toISOString();
          const same = this.sql('SELECT id FROM stop_sets WHERE content_hash = ? ORDER BY id DESC LIMIT 1').get(stopColumns.content_hash) as { id: number } | undefined;
          const stopSetId = same ? same.id : this.insertStopSet(input.stops, at);
          const planId = Number(
            this.sql(
              `INSERT INTO plans (name, stop_set_id, parent_id, created_at, settings, seed, zone_count, objective_km2, iterations, converged,
                                  fixed_zones, zone_ids, zone_names, limits, limit_settings, zone_stats, boundaries, request, run)
               VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?)`,
            ).run(
              name,
              stopSetId,
              parentId,
              at,
              columns.settings,
              columns.seed,
              columns.zone_count,
              columns.objective_km2,
              columns.iterations,
              columns.converged,
              columns.fixed_zones,
              columns.zone_ids,
              columns.zone_names,
              columns.limits,
              columns.limit_settings,
              columns.zone_stats,
              boundaries,
              request,
              columns.run,
            ).lastInsertRowid,
          );
          this.sql('INSERT INTO plan_arrays (plan_id, zones, stops, centres, assignment, locked, checksum) VALUES (?, ?, ?, ?, ?, ?, ?)').run(
            planId,
            columns.zone_count,
            input.stops.ids.length,
            columns.centres,
            columns.assignment,
            columns.locked,
            columns.checksum,
          );
          return planId;
        })
        .immediate();
      this.checkpoint();
      return this.planInfoById(id);
    });
  }

  /** Copies committed pages from the WAL into the main file, so that the file alone is current. */
  private checkpoint(): void {
    this.db.pragma('wal_checkpoint(PASSIVE)');
  }

  private planInfoById(id: number): StoredPlanInfo {
    return infoFromRow(this.sql(`${PLAN_INFO} WHERE p.id = ?`).get(id) as PlanInfoRow);
  }

  planInfo(rawName: string): StoredPlanInfo {
    const name = planName(this.file, rawName);
    return this.guard(() => {
      const r = this.sql(`${PLAN_INFO} WHERE p.name = ?`).get(name) as PlanInfoRow | undefined;
      if (!r) throw this.noSuchPlan(name);
      return infoFromRow(r);
    });
  }

  listPlans(): StoredPlanInfo[] {
    return this.guard(() => (this.sql(`${PLAN_INFO} ORDER BY p.id`).all() as PlanInfoRow[]).map(infoFromRow));
  }

  loadPlan(rawName: string): StoredPlan {
    const info = this.planInfo(rawName);
    return this.guard(() => {
      const row = this.sql(
        `SELECT id, name, stop_set_id, parent_id, created_at, settings, seed, zone_count, objective_km2, iterations, converged,
                fixed_zones, zone_ids, zone_names, limits, limit_settings, zone_stats, boundaries, request, run
         FROM plans WHERE id = ?`,
      ).get(info.id) as PlanRow;
      const arrays = this.sql('SELECT zones, stops, centres, assignment, locked, checksum FROM plan_arrays WHERE plan_id = ?').get(info.id) as PlanArraysRow | undefined;
      const stops = this.loadStopSet(row.stop_set_id);
      try {
        if (!arrays) throw new RangeError(`plan "${row.name}" has no arrays`);
        if (arrays.stops !== stops.ids.length) throw new RangeError(`plan "${row.name}" assigns ${arrays.stops} stops, its stop set has ${stops.ids.length}`);
        return {
          info,
          stops,
          plan: planFromRows(row, arrays),
          zoneStats: row.zone_stats ? fromJson<ZoneStats>(row.zone_stats) : null,
          run: row.run ? fromJson<RunSummary>(row.run) : null,
          boundaries: row.boundaries ? (JSON.parse(row.boundaries) as unknown) : null,
        };
      } catch (e) {
        if (e instanceof RangeError || e instanceof SyntaxError) throw new ProjectError(`${this.file} is damaged: ${e.message}`, 'damaged', this.file);
        throw e;
      }
    });
  }

  renamePlan(rawFrom: string, rawTo: string): StoredPlanInfo {
    this.needWrite();
    const from = planName(this.file, rawFrom);
    const to = planName(this.file, rawTo);
    return this.guard(() => {
      const id = this.db
        .transaction(() => {
          const planId = this.planId(from);
          if (planId === null) throw this.noSuchPlan(from);
          this.checkNameFree(to, planId);
          this.sql('UPDATE plans SET name = ? WHERE id = ?').run(to, planId);
          return planId;
        })
        .immediate();
      return this.planInfoById(id);
    });
  }

  // ---- manual edits

  /** The zone a stop is in after the plan and the moves made since. */
  private currentZone(planId: number, stopIndex: number): number {
    const moved = this.sql("SELECT to_zone FROM edits WHERE plan_id = ? AND stop_index = ? AND kind = 'move' ORDER BY id DESC LIMIT 1").get(planId, stopIndex) as
      | { to_zone: number }
      | undefined;
    if (moved) return moved.to_zone;
    const r = this.sql('SELECT substr(assignment, ?, 4) AS z FROM plan_arrays WHERE plan_id = ?').get(4 * stopIndex + 1, planId) as { z: Buffer };
    return r.z.readInt32LE(0);
  }

  /** Whether a zone's centre is pinned after the plan (its fixed depots) and the pins and unpins since. */
  private isPinned(planId: number, fixedZones: number, zone: number): boolean {
    // Centre edits are the rows without a stop (a CHECK of the edits table).
    const last = this.sql('SELECT kind FROM edits WHERE plan_id = ? AND to_zone = ? AND stop_index IS NULL ORDER BY id DESC LIMIT 1').get(planId, zone) as
      | { kind: EditKind }
      | undefined;
    return last ? last.kind === 'pin-centre' : zone < fixedZones;
  }

  /** Appends a manual edit to a plan's log (one transaction). The plan itself is not changed. */
  appendEdit(rawPlan: string, edit: EditToAdd): StoredEdit {
    this.needWrite();
    const info = this.planInfo(rawPlan);
    return this.guard(() => {
      const id = this.db
        .transaction(() => {
          const c = editColumns(
            edit,
            info,
            {
              stopIdOf: (i) => this.stopIds(info.stopSetId)[i]!,
              currentZone: (i) => this.currentZone(info.id, i),
              isPinned: (z) => this.isPinned(info.id, info.fixedZones, z),
              zoneLabel: (z) => zoneIdsOf(this.sql('SELECT zone_ids, zone_count FROM plans WHERE id = ?').get(info.id) as PlanRow)[z] ?? z + 1,
            },
            this.file,
          );
          return Number(
            this.sql('INSERT INTO edits (plan_id, kind, stop_index, stop_id, from_zone, to_zone, lon, lat, at) VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?)').run(
              info.id,
              edit.kind,
              c.stopIndex,
              c.stopId,
              c.fromZone,
              c.toZone,
              c.lon,
              c.lat,
              this.now().toISOString(),
            ).lastInsertRowid,
          );
        })
        .immediate();
      return this.editsWhere('e.id = ?', id)[0]!;
    });
  }

  private editsWhere(where: 'e.id = ?' | 'e.plan_id = ?', value: number): StoredEdit[] {
    // Two literal statements (no SQL text is ever built from values).
    const statement =
      where === 'e.id = ?'
        ? this.sql(
            `SELECT e.id, p.name AS plan, e.kind, e.stop_index, e.stop_id, e.from_zone, e.to_zone, e.lon, e.lat, e.at
             FROM edits e JOIN plans p ON p.id = e.plan_id WHERE e.id = ? ORDER BY e.id`,
          )
        : this.sql(
            `SELECT e.id, p.name AS plan, e.kind, e.stop_index, e.stop_id, e.from_zone, e.to_zone, e.lon, e.lat, e.at
             FROM edits e JOIN plans p ON p.id = e.plan_id WHERE e.plan_id = ? ORDER BY e.id`,
          );
    const rows = statement.all(value) as EditRow[];
    return rows.map(editFromRow);
  }

  /** A plan's manual edits, oldest first. */
  listEdits(rawPlan: string): StoredEdit[] {
    const info = this.planInfo(rawPlan);
    return this.guard(() => this.editsWhere('e.plan_id = ?', info.id));
  }

  /** Zone labels of a plan by zone index (1..K unless the plan names others). */
  zoneIds(rawPlan: string): number[] {
    const info = this.planInfo(rawPlan);
    return this.guard(() => zoneIdsOf(this.sql('SELECT zone_ids, zone_count FROM plans WHERE id = ?').get(info.id) as PlanRow));
  }
}

function fileIdentity(file: string): { dev: number; ino: number } | null {
  try {
    const st = statSync(file);
    return { dev: st.dev, ino: st.ino };
  } catch {
    return null;
  }
}
