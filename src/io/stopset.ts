import { unitsFromLonLat } from '../geo/unit.js';
import { isOnLand } from '../geo/land.js';
import { showValue, type Problem, type ProblemLog } from './problems.js';

/** Imported stops: ids, positions, workload, and where each came from in the file. */
export interface StopSet {
  /** The file name the stops were read from (as given). */
  readonly source: string;
  readonly format: 'csv' | 'geojson';
  readonly ids: readonly string[];
  /** Degrees, interleaved lon0 lat0 lon1 lat1 ... */
  readonly lonLat: Float64Array;
  /** Unit vectors, interleaved x y z. */
  readonly units: Float64Array;
  /** Workload per stop, >= 0; 1 per stop when the file has none. */
  readonly demand: Float64Array;
  /** CSV row (header = 1) or GeoJSON feature index of each stop. */
  readonly rows: Int32Array;
  /** Which columns or properties were read. */
  readonly fields: { readonly id: string | null; readonly lon: string; readonly lat: string; readonly demand: string | null };
  readonly warnings: readonly Problem[];
}

/** Grows typed arrays as stops arrive; checks ids for duplicates as it goes. */
export class StopCollector {
  private lonLat = new Float64Array(2 * 1024);
  private demand = new Float64Array(1024);
  private rows = new Int32Array(1024);
  readonly ids: string[] = [];
  count = 0;

  constructor(private readonly log: ProblemLog, private readonly where: 'row' | 'feature') {}

  /** Adds a stop. Duplicate ids are found in finish(), all at once. */
  add(id: string, lon: number, lat: number, demand: number, row: number): void {
    if (this.count === this.demand.length) this.grow();
    const i = this.count++;
    this.lonLat[2 * i] = lon;
    this.lonLat[2 * i + 1] = lat;
    this.demand[i] = demand;
    this.rows[i] = row;
    this.ids.push(id);
  }

  /** Logs an error for every id used before, naming both places. Returns true when there were none. */
  private checkIds(idField: string): boolean {
    const first = firstOfEqualStrings(this.ids);
    let ok = true;
    for (let i = 0; i < this.count; i++) {
      const f = first[i]!;
      if (f === i) continue;
      ok = false;
      const id = this.ids[i]!;
      this.log.error({
        code: 'duplicate-id',
        [this.where]: this.rows[i],
        field: idField,
        value: showValue(id),
        message: `id "${showValue(id)}" is used twice: ${this.where} ${this.rows[f]} has it too; every stop needs its own id`,
      });
    }
    return ok;
  }

  private grow(): void {
    const cap = this.demand.length * 2;
    const ll = new Float64Array(2 * cap);
    ll.set(this.lonLat);
    this.lonLat = ll;
    const d = new Float64Array(cap);
    d.set(this.demand);
    this.demand = d;
    const r = new Int32Array(cap);
    r.set(this.rows);
    this.rows = r;
  }

  /**
   * Checks the whole set (duplicate ids are errors, the rest warnings) and returns it; throws the
   * ImportError when the log holds any error.
   */
  finish(source: string, format: StopSet['format'], fields: StopSet['fields']): StopSet {
    this.checkIds(fields.id ?? (this.where === 'row' ? 'row number' : 'feature index'));
    this.log.throwIfErrors();
    const n = this.count;
    const lonLat = this.lonLat.slice(0, 2 * n);
    const demand = this.demand.slice(0, n);
    const rows = this.rows.slice(0, n);
    wholeSetWarnings(this.log, this.where, lonLat, demand, rows, fields);
    formulaWarning(this.log, this.where, this.ids, rows, fields.id);
    return {
      source,
      format,
      ids: this.ids,
      lonLat,
      units: unitsFromLonLat(lonLat),
      demand,
      rows,
      fields,
      warnings: this.log.warnings,
    };
  }
}

/**
 * For every string, the index of the first equal string: itself when it is the first.
 * Open addressing on an FNV-1a hash of the UTF-16 code units.
 */
export function firstOfEqualStrings(items: readonly string[]): Int32Array {
  const n = items.length;
  let size = 16;
  while (size < n * 2) size *= 2;
  const mask = size - 1;
  const table = new Int32Array(size).fill(-1);
  const out = new Int32Array(n);
  for (let i = 0; i < n; i++) {
    const s = items[i]!;
    let h = 0x811c9dc5;
    for (let c = 0; c < s.length; c++) h = Math.imul(h ^ s.charCodeAt(c), 0x01000193);
    h = (h ^ (h >>> 15)) & mask;
    for (;;) {
      const j = table[h]!;
      if (j < 0) {
        table[h] = i;
        out[i] = i;
        break;
      }
      if (items[j] === s) {
        out[i] = j;
        break;
      }
      h = (h + 1) & mask;
    }
  }
  return out;
}

/**
 * For every stop, the index of the first stop at exactly the same (lon, lat): itself when it is
 * the first. Open addressing on the coordinates' bits; -0 counts as 0.
 */
export function firstOccurrence(lonLat: Float64Array): Int32Array {
  const n = lonLat.length / 2;
  let size = 16;
  while (size < n * 2) size *= 2;
  const mask = size - 1;
  const table = new Int32Array(size).fill(-1);
  const out = new Int32Array(n);
  const scratch = new Float64Array(2);
  const bits = new Uint32Array(scratch.buffer);
  for (let i = 0; i < n; i++) {
    const lon = lonLat[2 * i]! + 0;
    const lat = lonLat[2 * i + 1]! + 0;
    scratch[0] = lon;
    scratch[1] = lat;
    let h = 0x811c9dc5;
    for (let w = 0; w < 4; w++) h = Math.imul(h ^ bits[w]!, 0x01000193);
    h = (h ^ (h >>> 15)) & mask;
    for (;;) {
      const j = table[h]!;
      if (j < 0) {
        table[h] = i;
        out[i] = i;
        break;
      }
      if (lonLat[2 * j] === lon && lonLat[2 * j + 1] === lat) {
        out[i] = j;
        break;
      }
      h = (h + 1) & mask;
    }
  }
  return out;
}

function listPlaces(where: string, rows: number[], total: number): string {
  const shown = rows.slice(0, 8).join(', ');
  return `${where}${rows.length > 1 ? 's' : ''} ${shown}${total > rows.length ? `, ... (${total} in all)` : ''}`;
}

/** Warnings that need the whole set: (0, 0), duplicate positions, zero demand, swapped columns. */
function wholeSetWarnings(
  log: ProblemLog,
  where: 'row' | 'feature',
  lonLat: Float64Array,
  demand: Float64Array,
  rows: Int32Array,
  fields: StopSet['fields'],
): void {
  const n = demand.length;
  const zeroZero: number[] = [];
  let zeroZeroCount = 0;
  const zeroDemand: number[] = [];
  let zeroDemandCount = 0;
  const firstAt = firstOccurrence(lonLat);
  const duplicates: string[] = [];
  let duplicateCount = 0;
  for (let i = 0; i < n; i++) {
    const lon = lonLat[2 * i]!;
    const lat = lonLat[2 * i + 1]!;
    if (lon === 0 && lat === 0) {
      zeroZeroCount++;
      if (zeroZero.length < 8) zeroZero.push(rows[i]!);
    }
    if (demand[i] === 0) {
      zeroDemandCount++;
      if (zeroDemand.length < 8) zeroDemand.push(rows[i]!);
    }
    const first = firstAt[i]!;
    if (first !== i) {
      const other = rows[first]!;
      duplicateCount++;
      if (duplicates.length < 5) duplicates.push(`${where} ${rows[i]} same as ${where} ${other}`);
    }
  }
  if (zeroZeroCount > 0) {
    log.warn({
      code: 'zero-zero',
      [where]: zeroZero[0],
      count: zeroZeroCount,
      message: `${zeroZeroCount} stop${zeroZeroCount === 1 ? '' : 's'} at longitude 0, latitude 0 (${listPlaces(where, zeroZero, zeroZeroCount)}): this is in the Gulf of Guinea and usually means a missing position`,
    });
  }
  if (duplicateCount > 0) {
    log.warn({
      code: 'duplicate-position',
      count: duplicateCount,
      message: `${duplicateCount} stop${duplicateCount === 1 ? ' shares its' : 's share their'} exact position with another stop (${duplicates.join('; ')}${duplicateCount > duplicates.length ? '; ...' : ''}): fine for several customers at one address, otherwise check for double entries`,
    });
  }
  if (zeroDemandCount > 0) {
    log.warn({
      code: 'zero-demand',
      [where]: zeroDemand[0],
      ...(fields.demand ? { field: fields.demand } : {}),
      count: zeroDemandCount,
      message: `${zeroDemandCount} stop${zeroDemandCount === 1 ? ' has' : 's have'} demand 0 (${listPlaces(where, zeroDemand, zeroDemandCount)}): they are given a zone but add no workload to it`,
    });
  }
  const swap = swappedLook(lonLat);
  if (swap) {
    log.warn({
      code: 'swapped-columns',
      field: `${fields.lat}/${fields.lon}`,
      message: `the positions look like latitude and longitude swapped: of ${swap.sampled} stops checked, ${swap.landAsGiven} lie on land as read and ${swap.landSwapped} would with the two exchanged; check the column names (or GeoJSON's [longitude, latitude] order)`,
    });
  }
}

/**
 * A sample of stops mostly at sea as read but mostly on land with lon and lat exchanged suggests
 * swapped columns. Thresholds (<= 20% as read, >= 80% swapped): common practice, no source.
 */
function swappedLook(lonLat: Float64Array): { sampled: number; landAsGiven: number; landSwapped: number } | null {
  const n = lonLat.length / 2;
  if (n < 3) return null;
  const step = Math.max(1, Math.floor(n / 400));
  let sampled = 0;
  let landAsGiven = 0;
  let landSwapped = 0;
  for (let i = 0; i < n; i += step) {
    const lon = lonLat[2 * i]!;
    const lat = lonLat[2 * i + 1]!;
    if (Math.abs(lon) > 90) return null; // cannot be a latitude: not swapped
    sampled++;
    if (isOnLand(lon, lat)) landAsGiven++;
    if (isOnLand(lat, lon)) landSwapped++;
  }
  if (sampled >= 3 && landAsGiven <= 0.2 * sampled && landSwapped >= 0.8 * sampled) return { sampled, landAsGiven, landSwapped };
  return null;
}

/**
 * Ids a spreadsheet would run as a formula when a CSV written from them is opened (OWASP, "CSV
 * Injection": cells starting with = + - @, tab or carriage return). They are kept as they are
 * (they are the planner's ids); the warning says where they are. "-12" or "+49 30..." are numbers,
 * not formulas, and are not flagged.
 */
function formulaWarning(log: ProblemLog, where: 'row' | 'feature', ids: readonly string[], rows: Int32Array, field: string | null): void {
  const at: number[] = [];
  let count = 0;
  for (let i = 0; i < ids.length; i++) {
    const id = ids[i]!;
    const c = id.charCodeAt(0);
    const formula = c === 61 || c === 64 || c === 9 || c === 13 || ((c === 43 || c === 45) && !/^[+-][\d\s().]*$/.test(id));
    if (!formula) continue;
    count++;
    if (at.length < 8) at.push(rows[i]!);
  }
  if (count === 0) return;
  log.warn({
    code: 'formula-like-id',
    [where]: at[0],
    ...(field ? { field } : {}),
    count,
    message: `${count} id${count === 1 ? ' starts' : 's start'} like a spreadsheet formula (=, +, -, @: ${listPlaces(where, at, count)}); they are kept as text, but a spreadsheet opening an exported CSV may run them: check where these ids came from`,
  });
}
