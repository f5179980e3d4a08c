/** The encodings of the project file (src/store/codec.ts). */
import { describe, expect, it } from 'vitest';
import { arrayBytes, decodeIds, encodeIds, float64FromBytes, fromJson, int32FromBytes, toJson } from '../../src/store/codec.js';

describe('JSON with every number', () => {
  it('keeps NaN, the infinities, -0 and typed arrays', () => {
    const value = { a: NaN, b: [Infinity, -Infinity, -0, 0, 1e-320, 0.1 + 0.2], c: Float64Array.of(1.5, NaN, -Infinity, -0), d: Int32Array.of(-1, 2 ** 31 - 1), e: 'text', f: null, g: true };
    const back = fromJson<typeof value>(toJson(value));
    expect(back).toEqual(value);
    expect(back.c).toBeInstanceOf(Float64Array);
    expect(back.d).toBeInstanceOf(Int32Array);
    expect(Object.is(back.b[2], -0)).toBe(true);
    expect(Object.is(back.c[3], -0)).toBe(true);
    expect(back.b[5]).toBe(0.1 + 0.2);
  });

  it('writes plain JSON for plain data', () => {
    expect(toJson({ zones: 6, seed: 2, name: 'x' })).toBe('{"zones":6,"seed":2,"name":"x"}');
  });
});

describe('stop ids', () => {
  it('are UTF-8 lines when they can be, JSON otherwise, and come back the same', () => {
    for (const ids of [[], [''], ['a', ''], ['a', 'b c', 'ü'], ['x\ny'], ['\ud83d'], ['ok', '\udc00x']]) {
      const { bytes, encoding } = encodeIds(ids);
      const lines = ids.every((s) => !s.includes('\n') && !/[\ud800-\udfff]/.test(s));
      expect(encoding, JSON.stringify(ids)).toBe(lines ? 'lines' : 'json');
      expect(decodeIds(bytes, ids.length, encoding, 'test')).toEqual(ids);
    }
  });

  it('refuses a count that does not match', () => {
    const { bytes, encoding } = encodeIds(['a', 'b']);
    expect(() => decodeIds(bytes, 3, encoding, 'stop set 1 ids')).toThrow('stop set 1 ids: 2 ids stored for 3 stops');
  });
});

describe('typed arrays', () => {
  it('are little-endian bytes with nothing around them', () => {
    // IEEE 754 binary64 of -1.5: 0xBFF8000000000000.
    expect(arrayBytes(Float64Array.of(-1.5)).toString('hex')).toBe('000000000000f8bf');
    expect(arrayBytes(Int32Array.of(-2)).toString('hex')).toBe('feffffff');
  });

  it('come back from unaligned bytes, and refuse a wrong length', () => {
    const src = Float64Array.of(1, 2, 3);
    const padded = Buffer.concat([Buffer.from([9]), arrayBytes(src)]).subarray(1); // byteOffset 1
    expect(float64FromBytes(padded, 3, 't')).toEqual(src);
    expect(() => float64FromBytes(padded, 4, 'plan "a" centres')).toThrow('plan "a" centres: 24 bytes stored for 4 values of 8 bytes');
    expect(int32FromBytes(arrayBytes(Int32Array.of(5, -6)), 2, 't')).toEqual(Int32Array.of(5, -6));
  });
});
