import { ProjectError } from './errors.js';
import type { EditKind, EditToAdd, StoredEdit, StoredPlanInfo } from './types.js';

/**
 * Manual edits of a saved plan: checking one against the plan and turning it into the columns of
 * the edits table. Zones are 0-based zone indices here (the API speaks in zone labels).
 */

export interface EditColumns {
  readonly stopIndex: number | null;
  readonly stopId: string | null;
  readonly fromZone: number | null;
  readonly toZone: number | null;
  readonly lon: number | null;
  readonly lat: number | null;
}

/** What an edit is checked against: a stop's id and zone now, whether a zone's centre is pinned now. */
export interface EditContext {
  stopIdOf(i: number): string;
  /** The stop's zone after the plan and the moves so far. */
  currentZone(i: number): number;
  /** Whether the zone's centre is a fixed depot after the plan and the pins and unpins so far. */
  isPinned(zone: number): boolean;
  /** The zone's label as shown (1..K unless the plan names others). */
  zoneLabel(zone: number): number;
}

/** [lon, lat] when both are degrees in range, else null. */
function position(lon: unknown, lat: unknown): [number, number] | null {
  return typeof lon === 'number' && lon >= -180 && lon <= 180 && typeof lat === 'number' && lat >= -90 && lat <= 90 ? [lon, lat] : null;
}

/** The columns of an edit, or ProjectError 'bad-edit' saying what does not fit the plan. */
export function editColumns(edit: EditToAdd, info: StoredPlanInfo, context: EditContext, file: string): EditColumns {
  const k = info.zones;
  const bad = (message: string): ProjectError => new ProjectError(message, 'bad-edit', file);
  const zoneOk = (z: unknown): z is number => Number.isInteger(z) && (z as number) >= 0 && (z as number) < k;
  if (edit.kind === 'pin-centre') {
    if (!zoneOk(edit.toZone)) throw bad(`pin-centre needs a zone of plan "${info.name}" (0..${k - 1} by index), got ${String(edit.toZone)}`);
    const at = position(edit.lon, edit.lat);
    if (!at) throw bad(`pin-centre needs a position: longitude -180..180 and latitude -90..90, got ${String(edit.lon)}, ${String(edit.lat)}`);
    return { stopIndex: null, stopId: null, fromZone: null, toZone: edit.toZone, lon: at[0], lat: at[1] };
  }
  if (edit.kind === 'unpin-centre') {
    if (!zoneOk(edit.toZone)) throw bad(`unpin-centre needs a zone of plan "${info.name}" (0..${k - 1} by index), got ${String(edit.toZone)}`);
    if (!context.isPinned(edit.toZone)) throw bad(`the centre of zone ${context.zoneLabel(edit.toZone)} of plan "${info.name}" is not pinned, so it cannot be unpinned`);
    if (edit.lon === undefined && edit.lat === undefined) return { stopIndex: null, stopId: null, fromZone: null, toZone: edit.toZone, lon: null, lat: null };
    const at = position(edit.lon, edit.lat);
    if (!at) throw bad(`unpin-centre takes a position or none: longitude -180..180 and latitude -90..90, got ${String(edit.lon)}, ${String(edit.lat)}`);
    return { stopIndex: null, stopId: null, fromZone: null, toZone: edit.toZone, lon: at[0], lat: at[1] };
  }
  if (edit.kind !== 'move' && edit.kind !== 'lock' && edit.kind !== 'unlock') {
    throw bad(`unknown kind of edit ${JSON.stringify((edit as { kind: unknown }).kind)}: move, lock, unlock, pin-centre or unpin-centre`);
  }
  const i = edit.stopIndex;
  if (!(typeof i === 'number' && Number.isInteger(i) && i >= 0 && i < info.stops)) throw bad(`${edit.kind} needs a stop of plan "${info.name}" (index 0..${info.stops - 1}), got ${String(i)}`);
  const stopId = context.stopIdOf(i);
  const fromZone = context.currentZone(i);
  let toZone: number | null = null;
  if (edit.kind === 'move') {
    if (!zoneOk(edit.toZone)) throw bad(`move needs the zone to move stop "${stopId}" to (0..${k - 1} by index), got ${String(edit.toZone)}`);
    toZone = edit.toZone;
  } else if (edit.kind === 'lock') {
    if (edit.toZone !== undefined && !zoneOk(edit.toZone)) throw bad(`lock: zone ${String(edit.toZone)} is not a zone of plan "${info.name}" (0..${k - 1} by index)`);
    toZone = edit.toZone ?? fromZone;
  }
  return { stopIndex: i, stopId, fromZone, toZone, lon: null, lat: null };
}

/** An edits row as SELECTed (with the plan's name). */
export interface EditRow {
  readonly id: number;
  readonly plan: string;
  readonly kind: EditKind;
  readonly stop_index: number | null;
  readonly stop_id: string | null;
  readonly from_zone: number | null;
  readonly to_zone: number | null;
  readonly lon: number | null;
  readonly lat: number | null;
  readonly at: string;
}

export function editFromRow(r: EditRow): StoredEdit {
  return { id: r.id, plan: r.plan, kind: r.kind, stopIndex: r.stop_index, stopId: r.stop_id, fromZone: r.from_zone, toZone: r.to_zone, lon: r.lon, lat: r.lat, at: r.at };
}
