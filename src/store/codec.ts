import { endianness } from 'node:os';

/**
 * How big arrays and small structured values are kept in the project file.
 *
 * Typed arrays are BLOBs of their elements, little-endian, with no header: the element count is
 * kept in its own column beside them (and a CHECK on length() holds the two together). Stop ids
 * are one BLOB of UTF-8 text, one id per line; sets whose ids hold a line break or unpaired UTF-16
 * surrogates (which UTF-8 cannot carry) are kept as a JSON array instead, so every id comes back
 * exactly as it was read. Small structured values (settings, limits, zone figures) are JSON text in
 * which non-finite numbers, -0 and typed arrays survive (see toJson).
 */

const LITTLE = endianness() === 'LE';

type NumberArray = Float64Array | Int32Array;

/** The bytes of a typed array, little-endian; a view without copying on little-endian machines. */
export function arrayBytes(a: NumberArray): Buffer {
  if (LITTLE) return Buffer.from(a.buffer, a.byteOffset, a.byteLength);
  const out = Buffer.alloc(a.byteLength);
  const view = new DataView(out.buffer, out.byteOffset, out.byteLength);
  if (a instanceof Float64Array) for (let i = 0; i < a.length; i++) view.setFloat64(8 * i, a[i]!, true);
  else for (let i = 0; i < a.length; i++) view.setInt32(4 * i, a[i]!, true);
  return out;
}

function fromBytes<T extends NumberArray>(bytes: Uint8Array, count: number, make: (n: number) => T, size: number, what: string): T {
  if (bytes.byteLength !== count * size) {
    throw new RangeError(`${what}: ${bytes.byteLength} bytes stored for ${count} values of ${size} bytes`);
  }
  const out = make(count);
  if (LITTLE) {
    // A copy into a fresh, aligned buffer (SQLite's buffer need not be 8-byte aligned).
    new Uint8Array(out.buffer, out.byteOffset, out.byteLength).set(bytes);
    return out;
  }
  const view = new DataView(bytes.buffer, bytes.byteOffset, bytes.byteLength);
  if (out instanceof Float64Array) for (let i = 0; i < count; i++) out[i] = view.getFloat64(8 * i, true);
  else for (let i = 0; i < count; i++) out[i] = view.getInt32(4 * i, true);
  return out;
}

export function float64FromBytes(bytes: Uint8Array, count: number, what: string): Float64Array {
  return fromBytes(bytes, count, (n) => new Float64Array(n), 8, what);
}

export function int32FromBytes(bytes: Uint8Array, count: number, what: string): Int32Array {
  return fromBytes(bytes, count, (n) => new Int32Array(n), 4, what);
}

export type IdsEncoding = 'lines' | 'json';

/** A UTF-16 surrogate without its partner: UTF-8 has no form for it. */
const LONE_SURROGATE = /[\uD800-\uDBFF](?![\uDC00-\uDFFF])|(?<![\uD800-\uDBFF])[\uDC00-\uDFFF]/;

/** Stop ids as one BLOB: UTF-8 lines when they allow it, else a JSON array (see the file comment). */
export function encodeIds(ids: readonly string[]): { bytes: Buffer; encoding: IdsEncoding } {
  const joined = ids.join('\n');
  let breaks = 0;
  for (let at = joined.indexOf('\n'); at >= 0; at = joined.indexOf('\n', at + 1)) breaks++;
  if (breaks === Math.max(0, ids.length - 1) && !LONE_SURROGATE.test(joined)) return { bytes: Buffer.from(joined, 'utf8'), encoding: 'lines' };
  // JSON.stringify writes unpaired surrogates as \uXXXX escapes (ES2019), so the text is valid UTF-8.
  return { bytes: Buffer.from(JSON.stringify(ids), 'utf8'), encoding: 'json' };
}

export function decodeIds(bytes: Uint8Array, count: number, encoding: string, what: string): string[] {
  const text = Buffer.from(bytes.buffer, bytes.byteOffset, bytes.byteLength).toString('utf8');
  let ids: unknown;
  if (encoding === 'lines') ids = count === 0 ? [] : text.split('\n');
  else if (encoding === 'json') ids = JSON.parse(text);
  else throw new RangeError(`${what}: unknown id encoding "${encoding}"`);
  if (!Array.isArray(ids) || ids.length !== count) {
    throw new RangeError(`${what}: ${Array.isArray(ids) ? ids.length : 'no'} ids stored for ${count} stops`);
  }
  return ids as string[];
}

/**
 * JSON text of a value in which non-finite numbers ({"$num":"Infinity"}), -0 ({"$num":"-0"}),
 * Float64Array ({"$f64":[...]}) and Int32Array ({"$i32":[...]}) survive; fromJson reverses it.
 * Plain numbers keep every bit: JavaScript writes the shortest text that reads back the same double.
 */
export function toJson(value: unknown): string {
  return JSON.stringify(value, function (this: Record<string, unknown>, key, v: unknown) {
    const raw = this[key]; // before toJSON: typed arrays arrive here as themselves
    if (raw instanceof Float64Array) return { $f64: Array.from(raw, encodeNumber) };
    if (raw instanceof Int32Array) return { $i32: Array.from(raw) };
    if (typeof v === 'number') return encodeNumber(v);
    return v;
  });
}

function encodeNumber(x: number): number | { $num: string } {
  if (Number.isFinite(x)) return Object.is(x, -0) ? { $num: '-0' } : x;
  return { $num: String(x) };
}

function decodeNumber(x: unknown): number {
  if (typeof x === 'number') return x;
  const s = (x as { $num?: unknown } | null)?.$num;
  if (s === 'Infinity') return Infinity;
  if (s === '-Infinity') return -Infinity;
  if (s === 'NaN') return NaN;
  if (s === '-0') return -0;
  throw new RangeError(`not a stored number: ${JSON.stringify(x)}`);
}

export function fromJson<T = unknown>(text: string): T {
  return JSON.parse(text, (_key, v: unknown) => {
    if (v && typeof v === 'object' && !Array.isArray(v)) {
      const o = v as Record<string, unknown>;
      const keys = Object.keys(o);
      if (keys.length === 1) {
        if (keys[0] === '$num') return decodeNumber(o);
        // Elements were already revived (inner { $num } objects became numbers).
        if (keys[0] === '$f64' && Array.isArray(o.$f64)) return Float64Array.from(o.$f64 as unknown[], decodeNumber);
        if (keys[0] === '$i32' && Array.isArray(o.$i32)) return Int32Array.from(o.$i32 as number[]);
      }
    }
    return v;
  }) as T;
}
