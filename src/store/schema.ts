import type Database from 'better-sqlite3';

/**
 * The project file's schema and its forward migrations.
 *
 * A Zoneplan project is an SQLite database whose header carries APPLICATION_ID at offset 68
 * (`PRAGMA application_id`, https://www.sqlite.org/pragma.html#pragma_application_id) and the
 * schema version at offset 60 (`PRAGMA user_version`, https://www.sqlite.org/fileformat2.html#user_version_number).
 * A new project is made by running every migration from an empty file, so a new file and a
 * migrated old one have the same schema by construction.
 *
 * Big arrays live in their own tables (stop_set_arrays, plan_arrays), away from the rows that
 * are listed: SQLite reads a row's columns in order, through every overflow page of a BLOB that
 * comes before the wanted column (https://www.sqlite.org/fileformat2.html#record_format), so a
 * listing must not share rows with megabytes of arrays.
 */

/** "ZPLN" in ASCII, as a 32-bit signed integer: 0x5A504C4E. Chosen by us; not in SQLite's magic.txt list. */
export const APPLICATION_ID = 0x5a504c4e;

/** The schema version this Zoneplan writes (and the newest it reads). */
export const SCHEMA_VERSION = 3;

export interface Migration {
  /** The version the file has after this step. */
  readonly to: number;
  readonly description: string;
  /** Fixed DDL text (no values from outside), run with db.exec inside the migration's transaction. */
  readonly sql: string;
}

/** v1: stop sets and plans (centres and assignment only). Zoneplan 0.1 files. */
const V1 = `
CREATE TABLE meta (
  key   TEXT PRIMARY KEY,
  value TEXT NOT NULL
);
CREATE TABLE stop_sets (
  id          INTEGER PRIMARY KEY,
  source      TEXT NOT NULL,
  format      TEXT NOT NULL CHECK (format IN ('csv', 'geojson')),
  imported_at TEXT NOT NULL,
  stop_count  INTEGER NOT NULL CHECK (stop_count >= 0),
  fields      TEXT NOT NULL,
  warnings    TEXT NOT NULL
);
CREATE TABLE stop_set_arrays (
  stop_set_id INTEGER PRIMARY KEY REFERENCES stop_sets (id),
  count       INTEGER NOT NULL CHECK (count >= 0),
  ids         BLOB NOT NULL,
  lon_lat     BLOB NOT NULL CHECK (length(lon_lat) = 16 * count),
  demand      BLOB NOT NULL CHECK (length(demand) = 8 * count),
  rows        BLOB NOT NULL CHECK (length(rows) = 4 * count)
);
CREATE TABLE plans (
  id            INTEGER PRIMARY KEY,
  name          TEXT NOT NULL UNIQUE COLLATE NOCASE,
  stop_set_id   INTEGER NOT NULL REFERENCES stop_sets (id),
  created_at    TEXT NOT NULL,
  settings      TEXT NOT NULL,
  seed          INTEGER,
  zone_count    INTEGER NOT NULL CHECK (zone_count >= 1),
  objective_km2 REAL NOT NULL,
  iterations    INTEGER NOT NULL,
  converged     INTEGER NOT NULL CHECK (converged IN (0, 1))
);
CREATE TABLE plan_arrays (
  plan_id    INTEGER PRIMARY KEY REFERENCES plans (id),
  zones      INTEGER NOT NULL CHECK (zones >= 1),
  stops      INTEGER NOT NULL CHECK (stops >= 0),
  centres    BLOB NOT NULL CHECK (length(centres) = 24 * zones),
  assignment BLOB NOT NULL CHECK (length(assignment) = 4 * stops)
);
CREATE INDEX plans_stop_set ON plans (stop_set_id);
`;

/**
 * v2: parent plans (rebalances), fixed depots, zone labels and names, locked stops, workload
 * limits (as set, and what they did), zone statistics, boundaries (GeoJSON, drawn later), the settings as asked and how the
 * run went; manual edits; a content hash of stop sets (so a re-run does not store the same stops
 * again) and a checksum of plan arrays (SQLite checks the file's structure, not the bytes inside
 * a BLOB: https://www.sqlite.org/cksumvfs.html); stop ids that hold line breaks (stored as JSON). New columns go to the end of their
 * table (ALTER TABLE ADD COLUMN, https://www.sqlite.org/lang_altertable.html#altertabaddcol).
 */
const V1_TO_V2 = `
ALTER TABLE stop_sets ADD COLUMN content_hash TEXT;
ALTER TABLE stop_set_arrays ADD COLUMN ids_encoding TEXT NOT NULL DEFAULT 'lines' CHECK (ids_encoding IN ('lines', 'json'));
ALTER TABLE plans ADD COLUMN parent_id INTEGER REFERENCES plans (id);
ALTER TABLE plans ADD COLUMN fixed_zones INTEGER NOT NULL DEFAULT 0 CHECK (fixed_zones >= 0);
ALTER TABLE plans ADD COLUMN zone_ids TEXT;
ALTER TABLE plans ADD COLUMN zone_names TEXT;
ALTER TABLE plans ADD COLUMN limits TEXT;
ALTER TABLE plans ADD COLUMN limit_settings TEXT;
ALTER TABLE plans ADD COLUMN zone_stats TEXT;
ALTER TABLE plans ADD COLUMN boundaries TEXT;
ALTER TABLE plans ADD COLUMN request TEXT;
ALTER TABLE plans ADD COLUMN run TEXT;
ALTER TABLE plan_arrays ADD COLUMN locked BLOB CHECK (locked IS NULL OR length(locked) = 4 * stops);
ALTER TABLE plan_arrays ADD COLUMN checksum TEXT;
CREATE INDEX stop_sets_hash ON stop_sets (content_hash);
CREATE INDEX plans_parent ON plans (parent_id);
CREATE TABLE edits (
  id         INTEGER PRIMARY KEY,
  plan_id    INTEGER NOT NULL REFERENCES plans (id),
  kind       TEXT NOT NULL CHECK (kind IN ('move', 'lock', 'unlock', 'pin-centre')),
  stop_index INTEGER CHECK (stop_index IS NULL OR stop_index >= 0),
  stop_id    TEXT,
  from_zone  INTEGER,
  to_zone    INTEGER,
  lon        REAL,
  lat        REAL,
  at         TEXT NOT NULL,
  CHECK ((kind = 'pin-centre') = (stop_index IS NULL)),
  CHECK (kind <> 'move' OR (from_zone IS NOT NULL AND to_zone IS NOT NULL)),
  CHECK (kind <> 'lock' OR to_zone IS NOT NULL),
  CHECK (kind <> 'pin-centre' OR (to_zone IS NOT NULL AND lon IS NOT NULL AND lat IS NOT NULL))
);
CREATE INDEX edits_plan ON edits (plan_id, id);
`;

/**
 * v3: a zone centre can be freed again (edit kind `unpin-centre`: the zone's centre is no longer a
 * fixed depot; with a position, it also goes back there). SQLite cannot change a table's CHECK
 * constraints in place (https://www.sqlite.org/lang_altertable.html#otheralter), so the edits
 * table is made anew with the wider checks, its rows copied with their ids, the old table dropped
 * and the new one renamed; its index is made again. The migration's transaction holds all of it.
 * No other table refers to edits, so dropping it leaves no reference dangling; its own reference
 * to plans is checked by the foreign key check at the end of the migration.
 */
const V2_TO_V3 = `
CREATE TABLE edits_v3 (
  id         INTEGER PRIMARY KEY,
  plan_id    INTEGER NOT NULL REFERENCES plans (id),
  kind       TEXT NOT NULL CHECK (kind IN ('move', 'lock', 'unlock', 'pin-centre', 'unpin-centre')),
  stop_index INTEGER CHECK (stop_index IS NULL OR stop_index >= 0),
  stop_id    TEXT,
  from_zone  INTEGER,
  to_zone    INTEGER,
  lon        REAL,
  lat        REAL,
  at         TEXT NOT NULL,
  CHECK ((kind IN ('pin-centre', 'unpin-centre')) = (stop_index IS NULL)),
  CHECK (kind <> 'move' OR (from_zone IS NOT NULL AND to_zone IS NOT NULL)),
  CHECK (kind <> 'lock' OR to_zone IS NOT NULL),
  CHECK (kind <> 'pin-centre' OR (to_zone IS NOT NULL AND lon IS NOT NULL AND lat IS NOT NULL)),
  CHECK (kind <> 'unpin-centre' OR (to_zone IS NOT NULL AND (lon IS NULL) = (lat IS NULL)))
);
INSERT INTO edits_v3 (id, plan_id, kind, stop_index, stop_id, from_zone, to_zone, lon, lat, at)
  SELECT id, plan_id, kind, stop_index, stop_id, from_zone, to_zone, lon, lat, at FROM edits ORDER BY id;
DROP TABLE edits;
ALTER TABLE edits_v3 RENAME TO edits;
CREATE INDEX edits_plan ON edits (plan_id, id);
`;

export const MIGRATIONS: readonly Migration[] = [
  { to: 1, description: 'stop sets and plans', sql: V1 },
  { to: 2, description: 'parent plans, locks, limits, zone statistics, boundaries, manual edits', sql: V1_TO_V2 },
  { to: 3, description: 'zone centres can be unpinned (edit kind unpin-centre)', sql: V2_TO_V3 },
];

/**
 * Brings the file from its version to `target` (default SCHEMA_VERSION) in ONE transaction:
 * either every step is done and user_version says so, or nothing changed. Forward only.
 * The caller holds the write lock and has checked the application id.
 */
export function migrate(db: Database.Database, target = SCHEMA_VERSION): { from: number; to: number } {
  const from = db.pragma('user_version', { simple: true }) as number;
  if (from >= target) return { from, to: from };
  db.transaction(() => {
    for (const step of MIGRATIONS) {
      if (step.to <= from || step.to > target) continue;
      db.exec(step.sql);
      // PRAGMA takes no bound parameters; the value is our own integer constant.
      db.pragma(`user_version = ${Math.trunc(step.to)}`);
    }
    const broken = db.pragma('foreign_key_check') as unknown[];
    if (broken.length > 0) throw new RangeError(`migration to version ${target} left ${broken.length} broken references`);
  }).immediate();
  return { from, to: target };
}
