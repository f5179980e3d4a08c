import { createHash } from 'node:crypto';
import { unitsFromLonLat } from '../geo/unit.js';
import type { Problem } from '../io/problems.js';
import type { StopSet } from '../io/stopset.js';
import type { LimitsReport } from '../solve/limited.js';
import type { LimitSettings } from '../solve/limits.js';
import type { Plan } from '../solve/plan.js';
import type { SolveResult, SolveSettings } from '../solve/types.js';
import type { PlanFigures, ZoneFigures } from '../zones/stats.js';
import { arrayBytes, decodeIds, encodeIds, float64FromBytes, fromJson, int32FromBytes, toJson } from './codec.js';

/**
 * Stop sets and plans to and from the columns of their rows (see schema.ts). Pure: values in,
 * values out; the SQL is in project-store.ts.
 */

/** What a stop set row and its arrays row hold, ready to bind. */
export interface StopSetColumns {
  readonly source: string;
  readonly format: StopSet['format'];
  readonly stop_count: number;
  readonly fields: string;
  readonly warnings: string;
  readonly content_hash: string;
  readonly ids: Buffer;
  readonly ids_encoding: string;
  readonly lon_lat: Buffer;
  readonly demand: Buffer;
  readonly rows: Buffer;
}

function hashOf(meta: string, parts: readonly Buffer[]): string {
  const h = createHash('sha256');
  const len = Buffer.alloc(8);
  for (const p of [Buffer.from(meta, 'utf8'), ...parts]) {
    len.writeBigUInt64LE(BigInt(p.byteLength));
    h.update(len);
    h.update(p);
  }
  return h.digest('hex');
}

export function stopSetColumns(stops: StopSet): StopSetColumns {
  const n = stops.ids.length;
  if (stops.lonLat.length !== 2 * n || stops.demand.length !== n || stops.rows.length !== n) {
    throw new RangeError(`stop set of ${n} ids has ${stops.lonLat.length / 2} positions, ${stops.demand.length} demands and ${stops.rows.length} rows`);
  }
  const ids = encodeIds(stops.ids);
  const fields = JSON.stringify(stops.fields);
  const warnings = JSON.stringify(stops.warnings);
  const lonLat = arrayBytes(stops.lonLat);
  const demand = arrayBytes(stops.demand);
  const rows = arrayBytes(stops.rows);
  const meta = JSON.stringify([stops.source, stops.format, fields, warnings, ids.encoding]);
  return {
    source: stops.source,
    format: stops.format,
    stop_count: n,
    fields,
    warnings,
    content_hash: hashOf(meta, [ids.bytes, lonLat, demand, rows]),
    ids: ids.bytes,
    ids_encoding: ids.encoding,
    lon_lat: lonLat,
    demand,
    rows,
  };
}

export interface StopSetRow {
  readonly id: number;
  readonly source: string;
  readonly format: string;
  readonly imported_at: string;
  readonly stop_count: number;
  readonly fields: string;
  readonly warnings: string;
  readonly content_hash: string | null;
}

export interface StopSetArraysRow {
  readonly count: number;
  readonly ids: Buffer;
  readonly ids_encoding: string;
  readonly lon_lat: Buffer;
  readonly demand: Buffer;
  readonly rows: Buffer;
}

/** The stop set as it was read; unit vectors are computed again from the positions. */
export function stopSetFromRows(row: StopSetRow, arrays: StopSetArraysRow): StopSet {
  const what = `stop set ${row.id}`;
  const n = row.stop_count;
  if (arrays.count !== n) throw new RangeError(`${what}: ${arrays.count} stops stored for ${n}`);
  const lonLat = float64FromBytes(arrays.lon_lat, 2 * n, `${what} positions`);
  const stops: StopSet = {
    source: row.source,
    format: row.format === 'geojson' ? 'geojson' : 'csv',
    ids: decodeIds(arrays.ids, n, arrays.ids_encoding, `${what} ids`),
    lonLat,
    units: unitsFromLonLat(lonLat),
    demand: float64FromBytes(arrays.demand, n, `${what} demand`),
    rows: int32FromBytes(arrays.rows, n, `${what} rows`),
    fields: JSON.parse(row.fields) as StopSet['fields'],
    warnings: JSON.parse(row.warnings) as Problem[],
  };
  if (row.content_hash !== null && stopSetColumns(stops).content_hash !== row.content_hash) {
    throw new RangeError(`${what} does not match its checksum`);
  }
  return stops;
}

/** How the run went, beyond the plan itself (for reports; the iteration history is not kept). */
export interface RunSummary {
  readonly bestRestart: number;
  readonly restartObjectivesKm2: readonly number[];
  readonly startStops: number;
  readonly reseeded: number;
  readonly distanceEvaluations: number;
  readonly naiveDistanceEvaluations: number;
}

/** The zone figures as kept in zone_stats (PlanFigures without the per-stop km, which is derived). */
export interface ZoneStats {
  readonly zones: readonly ZoneFigures[];
  readonly objectiveKm2: number;
  readonly totalDemand: number;
}

export interface PlanColumns {
  readonly settings: string;
  readonly seed: number | null;
  readonly zone_count: number;
  readonly objective_km2: number;
  readonly iterations: number;
  readonly converged: number;
  readonly fixed_zones: number;
  readonly zone_ids: string;
  readonly zone_names: string;
  readonly limits: string | null;
  readonly limit_settings: string | null;
  readonly zone_stats: string | null;
  readonly run: string | null;
  readonly centres: Buffer;
  readonly assignment: Buffer;
  readonly locked: Buffer | null;
  readonly checksum: string;
}

/** SHA-256 of a plan's arrays: SQLite checks the file's structure, not the bytes inside a BLOB. */
function planChecksum(centres: Buffer, assignment: Buffer, locked: Buffer | null): string {
  return hashOf(locked ? 'locked' : 'free', [centres, assignment, locked ?? Buffer.alloc(0)]);
}

export function planColumns(plan: Plan, stopCount: number, figures: PlanFigures | null, result: SolveResult | null): PlanColumns {
  const k = plan.zoneIds.length;
  if (k < 1 || plan.centres.length !== 3 * k || plan.zoneNames.length !== k) {
    throw new RangeError(`plan of ${k} zones has ${plan.centres.length / 3} centres and ${plan.zoneNames.length} zone names`);
  }
  if (plan.assignment.length !== stopCount) throw new RangeError(`plan assigns ${plan.assignment.length} stops, its stop set has ${stopCount}`);
  if (plan.locked && plan.locked.length !== stopCount) throw new RangeError(`plan locks ${plan.locked.length} stops, its stop set has ${stopCount}`);
  const stats: ZoneStats | null = figures ? { zones: figures.zones, objectiveKm2: figures.objectiveKm2, totalDemand: figures.totalDemand } : null;
  const run: RunSummary | null = result
    ? {
        bestRestart: result.bestRestart,
        restartObjectivesKm2: result.restartObjectivesKm2,
        startStops: result.startStops,
        reseeded: result.reseeded,
        distanceEvaluations: result.distanceEvaluations,
        naiveDistanceEvaluations: result.naiveDistanceEvaluations,
      }
    : null;
  const centres = arrayBytes(plan.centres);
  const assignment = arrayBytes(plan.assignment);
  const locked = plan.locked ? arrayBytes(plan.locked) : null;
  return {
    settings: toJson(plan.settings),
    seed: plan.settings.seed ?? null,
    zone_count: k,
    objective_km2: plan.objectiveKm2,
    iterations: plan.iterations,
    converged: plan.converged ? 1 : 0,
    fixed_zones: plan.fixedZones,
    zone_ids: JSON.stringify(plan.zoneIds),
    zone_names: JSON.stringify(plan.zoneNames),
    limits: plan.limits ? toJson(plan.limits) : null,
    limit_settings: plan.limitSettings ? toJson(plan.limitSettings) : null,
    zone_stats: stats ? toJson(stats) : null,
    run: run ? toJson(run) : null,
    centres,
    assignment,
    locked,
    checksum: planChecksum(centres, assignment, locked),
  };
}

export interface PlanRow {
  readonly id: number;
  readonly name: string;
  readonly stop_set_id: number;
  readonly parent_id: number | null;
  readonly created_at: string;
  readonly settings: string;
  readonly seed: number | null;
  readonly zone_count: number;
  readonly objective_km2: number;
  readonly iterations: number;
  readonly converged: number;
  readonly fixed_zones: number;
  readonly zone_ids: string | null;
  readonly zone_names: string | null;
  readonly limits: string | null;
  readonly limit_settings: string | null;
  readonly zone_stats: string | null;
  readonly boundaries: string | null;
  readonly request: string | null;
  readonly run: string | null;
}

export interface PlanArraysRow {
  readonly zones: number;
  readonly stops: number;
  readonly centres: Buffer;
  readonly assignment: Buffer;
  readonly locked: Buffer | null;
  readonly checksum: string | null;
}

/** Zone labels of a plan row: as saved, or 1..K for files from before they were kept. */
export function zoneIdsOf(row: Pick<PlanRow, 'zone_ids' | 'zone_count'>): number[] {
  return row.zone_ids ? (JSON.parse(row.zone_ids) as number[]) : Array.from({ length: row.zone_count }, (_, j) => j + 1);
}

export function planFromRows(row: PlanRow, arrays: PlanArraysRow): Plan {
  const what = `plan "${row.name}"`;
  const k = row.zone_count;
  if (arrays.zones !== k) throw new RangeError(`${what}: ${arrays.zones} zones stored for ${k}`);
  const n = arrays.stops;
  const zoneIds = zoneIdsOf(row);
  const zoneNames = row.zone_names ? (JSON.parse(row.zone_names) as (string | null)[]) : new Array<string | null>(k).fill(null);
  if (zoneIds.length !== k || zoneNames.length !== k) throw new RangeError(`${what}: ${zoneIds.length} zone labels and ${zoneNames.length} names for ${k} zones`);
  if (arrays.checksum !== null && planChecksum(arrays.centres, arrays.assignment, arrays.locked) !== arrays.checksum) {
    throw new RangeError(`${what} does not match its checksum`);
  }
  return {
    zoneIds,
    zoneNames,
    centres: float64FromBytes(arrays.centres, 3 * k, `${what} centres`),
    assignment: int32FromBytes(arrays.assignment, n, `${what} assignment`),
    objectiveKm2: row.objective_km2,
    iterations: row.iterations,
    converged: row.converged === 1,
    settings: fromJson<SolveSettings>(row.settings),
    fixedZones: row.fixed_zones,
    locked: arrays.locked ? int32FromBytes(arrays.locked, n, `${what} locks`) : null,
    limits: row.limits ? fromJson<LimitsReport>(row.limits) : null,
    limitSettings: row.limit_settings ? fromJson<LimitSettings>(row.limit_settings) : null,
  };
}
