import * as GJV from 'geojson-validation';
import { ProblemLog, fileError, showValue } from './problems.js';
import { StopCollector, type StopSet } from './stopset.js';
import { FIELD_NAMES, MAX_ID_LENGTH, normaliseName, type FieldChoice } from './fields.js';

export type GeoJsonOptions = FieldChoice;

/** Line and column of a character offset, for JSON syntax errors. */
function lineColumn(text: string, offset: number): string {
  let line = 1;
  let last = -1;
  for (let i = 0; i < offset && i < text.length; i++) {
    if (text.charCodeAt(i) === 10) {
      line++;
      last = i;
    }
  }
  return `line ${line}, column ${offset - last}`;
}

/**
 * "the file is not valid JSON at line 3, column 1: unexpected ']'" from a JSON.parse error. V8
 * gives a position for most errors; for an unexpected token it quotes the text around it
 * instead ('Unexpected token \']\', ..." 52.5]}},\n]}" is not valid JSON', up to 10 characters
 * before the token after the "..."), which is found in the text again. The quoted file text is
 * not repeated (it may hold line breaks and control characters).
 */
export function describeJsonError(body: string, e: unknown): string {
  const msg = e instanceof Error ? e.message : String(e);
  const at = /at position (\d+)/.exec(msg);
  const token = /^Unexpected token '([\s\S]+?)', (\.\.\.)?"([\s\S]*?)"(\.\.\.)? is not valid JSON$/.exec(msg);
  let offset: number | null = at ? Number(at[1]) : null;
  let what = msg.replace(/ in JSON at position \d+.*$/, '').replace(/ after JSON at position \d+.*$/, ' after the JSON value').replace(/^JSON\.parse: /, '');
  if (token) {
    const [, ch, prefix, snippet] = token;
    const start = body.indexOf(snippet!);
    if (start >= 0) offset = start + (prefix ? Math.min(10, snippet!.length) : Math.max(0, snippet!.indexOf(ch!)));
    what = `unexpected ${JSON.stringify(ch)}${ch === 'N' || ch === 'I' ? ' (NaN and Infinity are not JSON numbers)' : ''}`;
  } else if (/Unexpected end of JSON input/.test(msg)) {
    offset = body.length;
    what = 'the file ends before the JSON does (cut off?)';
  }
  const where = offset === null ? '' : ` at ${lineColumn(body, offset)}`;
  return `the file is not valid JSON${where}: ${what.charAt(0).toLowerCase()}${what.slice(1)}`;
}

/** Finds a property by the user's name or the usual names (case, spaces and underscores ignored). */
function propertyKey(props: Record<string, unknown>, role: 'id' | 'demand', chosen: string | undefined): string | null {
  const keys = Object.keys(props);
  if (chosen !== undefined) {
    if (chosen in props) return chosen;
    const n = normaliseName(chosen);
    return keys.find((k) => normaliseName(k) === n) ?? null;
  }
  for (const usual of FIELD_NAMES[role]) {
    const k = keys.find((key) => normaliseName(key) === usual);
    if (k !== undefined) return k;
  }
  return null;
}

/**
 * Parses stops from a GeoJSON FeatureCollection of Point features (RFC 7946: coordinates are
 * [longitude, latitude], an optional third value is an altitude and is ignored). The id is the
 * feature's "id" member, else an id-like property, else the feature index; demand comes from a
 * demand-like property (or the one named), default 1. A plan file written by Zoneplan can be read
 * back: only its features with role "stop" are taken. Pure: text in, a StopSet or an ImportError.
 */
export function parseStopsGeoJson(text: string, file: string, options: GeoJsonOptions = {}): StopSet {
  const body = text.charCodeAt(0) === 0xfeff ? text.slice(1) : text;
  if (body.trim() === '') throw fileError(file, 'empty-file', 'the file is empty: it needs a GeoJSON FeatureCollection of Point features');
  let doc: unknown;
  try {
    doc = JSON.parse(body);
  } catch (e) {
    throw fileError(file, 'invalid-json', describeJsonError(body, e));
  }
  if (typeof doc !== 'object' || doc === null || Array.isArray(doc)) {
    throw fileError(file, 'not-feature-collection', 'the file must hold a GeoJSON object of type "FeatureCollection"');
  }
  const type = (doc as { type?: unknown }).type;
  if (type !== 'FeatureCollection') {
    throw fileError(
      file,
      'not-feature-collection',
      `the GeoJSON object has type ${JSON.stringify(type ?? null)}; stops must come as a "FeatureCollection" of Point features`,
    );
  }
  const features = (doc as { features?: unknown }).features;
  if (!Array.isArray(features)) throw fileError(file, 'not-feature-collection', 'the FeatureCollection has no "features" array');
  if (features.length === 0) throw fileError(file, 'no-stops', 'the FeatureCollection has no features');
  const log = new ProblemLog(file);
  if ('crs' in (doc as object)) {
    log.warn({ code: 'crs', field: 'crs', message: 'the "crs" member is ignored: RFC 7946 GeoJSON coordinates are always WGS 84 longitude and latitude in degrees' });
  }
  const roles = features.some((f) => isObject(f) && isObject(f.properties) && typeof f.properties.role === 'string');
  let idKey: string | null | undefined;
  let demandKey: string | null | undefined;
  let idName = options.id ?? 'id';
  let demandName: string | null = options.demand ?? null;
  let altitudes = 0;
  let skippedRoles = 0;
  const collector = new StopCollector(log, 'feature');

  for (let index = 0; index < features.length; index++) {
    const f: unknown = features[index];
    if (!isObject(f) || f.type !== 'Feature') {
      const nested = isObject(f) && f.type === 'FeatureCollection';
      log.error({
        code: 'not-feature',
        feature: index,
        field: 'type',
        value: showValue(isObject(f) ? (f.type ?? null) : f),
        message: nested
          ? 'a FeatureCollection inside "features" is not read: move its features into the top-level "features" array'
          : 'each member of "features" must be a Feature object',
      });
      continue;
    }
    const props = isObject(f.properties) ? f.properties : {};
    if (roles && props.role !== 'stop') {
      skippedRoles++;
      continue;
    }
    const g = f.geometry;
    if (!isObject(g)) {
      log.error({ code: 'no-geometry', feature: index, field: 'geometry', value: showValue(g ?? null), message: 'the feature has no geometry; a stop needs a Point' });
      continue;
    }
    if (g.type !== 'Point') {
      log.error({
        code: 'not-point',
        feature: index,
        field: 'geometry.type',
        value: showValue(g.type ?? null),
        message: `geometry must be a Point${g.type === 'MultiPoint' ? ' (split a MultiPoint into one Point feature per stop)' : ''}`,
      });
      continue;
    }
    const c = g.coordinates;
    if (!Array.isArray(c) || c.length < 2) {
      const trace = pointTrace(g);
      const detail = `coordinates must be [longitude, latitude]${Array.isArray(trace) && trace.length > 0 ? ` (${trace.join('; ')})` : ''}`;
      log.error({ code: 'bad-coordinate', feature: index, field: 'geometry.coordinates', value: showValue(c ?? null), message: detail });
      continue;
    }
    let bad = false;
    const lon = c[0];
    const lat = c[1];
    if (typeof lon !== 'number' || !Number.isFinite(lon)) {
      log.error({ code: 'bad-coordinate', feature: index, field: 'geometry.coordinates[0]', value: showValue(lon ?? null), message: 'longitude must be a finite number' });
      bad = true;
    } else if (lon < -180 || lon > 180) {
      log.error({ code: 'lon-range', feature: index, field: 'geometry.coordinates[0]', value: showValue(lon), message: 'longitude must be between -180 and 180 (GeoJSON order is [longitude, latitude])' });
      bad = true;
    }
    if (typeof lat !== 'number' || !Number.isFinite(lat)) {
      log.error({ code: 'bad-coordinate', feature: index, field: 'geometry.coordinates[1]', value: showValue(lat ?? null), message: 'latitude must be a finite number' });
      bad = true;
    } else if (lat < -90 || lat > 90) {
      log.error({ code: 'lat-range', feature: index, field: 'geometry.coordinates[1]', value: showValue(lat), message: 'latitude must be between -90 and 90 (GeoJSON order is [longitude, latitude])' });
      bad = true;
    }
    if (c.length > 2) altitudes++;

    if (idKey === undefined) {
      idKey = propertyKey(props, 'id', options.id);
      if (options.id !== undefined && idKey === null && f.id === undefined) {
        log.error({ code: 'header', feature: index, field: options.id, message: `the id property "${options.id}" was asked for but the feature has only ${Object.keys(props).map((k) => `"${k}"`).join(', ') || 'no properties'}` });
      }
      if (idKey) idName = idKey;
    }
    if (demandKey === undefined) {
      demandKey = options.demand === null ? null : propertyKey(props, 'demand', options.demand);
      if (typeof options.demand === 'string' && demandKey === null) {
        log.error({ code: 'header', feature: index, field: options.demand, message: `the demand property "${options.demand}" was asked for but the feature has only ${Object.keys(props).map((k) => `"${k}"`).join(', ') || 'no properties'}` });
      }
      demandName = demandKey;
    }

    let id: string;
    if (options.id === undefined && (typeof f.id === 'string' || typeof f.id === 'number')) {
      id = String(f.id);
      idName = 'id';
    } else if (idKey && (typeof props[idKey] === 'string' || typeof props[idKey] === 'number')) id = String(props[idKey]).trim();
    else if (typeof f.id === 'string' || typeof f.id === 'number') id = String(f.id);
    else id = String(index);
    if (id === '') {
      log.error({ code: 'missing-id', feature: index, field: idKey ?? 'id', message: 'id is empty: every stop needs an id' });
      bad = true;
    } else if (id.length > MAX_ID_LENGTH) {
      log.error({ code: 'long-id', feature: index, field: idKey ?? 'id', value: showValue(id), message: `id is ${id.length} characters long; ids are at most ${MAX_ID_LENGTH}` });
      bad = true;
    }

    let demand = 1;
    if (demandKey) {
      const v = props[demandKey];
      const field = `properties.${demandKey}`;
      // Checked on its own: a bad position in the same feature must not hide a bad demand.
      let read = true;
      if (typeof v === 'string' && /^[+-]?(\d+\.?\d*|\.\d+)([eE][+-]?\d+)?$/.test(v.trim())) demand = Number(v);
      else if (typeof v === 'number') demand = v;
      else {
        log.error({ code: 'bad-demand', feature: index, field, value: showValue(v ?? null), message: v === undefined || v === null ? 'demand is missing: write 0 for a stop with no workload' : 'demand is not a number' });
        read = false;
      }
      if (read && !Number.isFinite(demand)) {
        log.error({ code: 'bad-demand', feature: index, field, value: showValue(v), message: 'demand must be a finite number' });
        read = false;
      } else if (read && demand < 0) {
        log.error({ code: 'negative-demand', feature: index, field, value: showValue(v), message: 'demand must not be negative' });
        read = false;
      }
      if (!read) bad = true;
    }
    if (!bad) collector.add(id, lon as number, lat as number, demand, index);
  }
  if (collector.count === 0 && log.ok) {
    throw fileError(file, 'no-stops', roles ? `the file has ${skippedRoles} features but none with role "stop"` : 'the FeatureCollection has no stops');
  }
  if (altitudes > 0) {
    log.warn({ code: 'altitude', count: altitudes, field: 'geometry.coordinates[2]', message: `${altitudes} point${altitudes === 1 ? ' has' : 's have'} a third coordinate (altitude); it is ignored` });
  }
  return collector.finish(file, 'geojson', { id: idName, lon: 'geometry.coordinates[0]', lat: 'geometry.coordinates[1]', demand: demandName ? `properties.${demandName}` : null });
}

/**
 * geojson-validation's reasons a Point is invalid; it recurses into the coordinates, so a
 * pathologically nested array (thousands of levels) would overflow the stack: not asked then.
 */
function pointTrace(g: unknown): string[] {
  if (nestingDepth((g as { coordinates?: unknown }).coordinates, 8) > 6) return ['arrays nested too deeply'];
  try {
    const t = GJV.isPoint(g, true);
    return Array.isArray(t) ? t : [];
  } catch {
    return [];
  }
}

/** Depth of nested arrays, counted up to `limit`. */
export function nestingDepth(v: unknown, limit: number): number {
  let depth = 0;
  let cur = v;
  while (Array.isArray(cur) && depth < limit) {
    depth++;
    cur = cur[0];
  }
  return depth;
}

function isObject(v: unknown): v is Record<string, unknown> {
  return typeof v === 'object' && v !== null && !Array.isArray(v);
}
