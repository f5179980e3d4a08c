import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { isDecimal, readNumber } from '../../src/io/numbers.js';

describe('isDecimal', () => {
  // Plain decimal notation: the StrDecimalLiteral of ECMA-262 (section 7.1.4.1.1) without
  // "Infinity", and without the hex/octal/binary and empty forms that Number() also accepts.
  it.each(['0', '12', '-0.5', '+3', '1.', '.5', '-.5', '1e3', '1E3', '1e+3', '2.5e-7', '00012', '48.8566'])('accepts %j', (s) => {
    expect(isDecimal(s)).toBe(true);
  });

  it.each(['', '+', '-', '.', '+.', 'e5', '.e5', '1e', '1e+', '1e-', '1.2.3', '1,5', '0x10', '0b1', '0o7', 'Infinity', '-Infinity', 'NaN', '1_000', '1 000', ' 1', '1 ', '١٢', '--1', '+-1', '1e5.5', '1ee5', '½'])(
    'rejects %j',
    (s) => {
      expect(isDecimal(s)).toBe(false);
    },
  );

  it('agrees with a regular expression of the same grammar on random strings', () => {
    const grammar = /^[+-]?(\d+\.?\d*|\.\d+)([eE][+-]?\d+)?$/;
    const chars = fc.constantFrom('0', '1', '9', '.', 'e', 'E', '+', '-', 'x', ' ', ',');
    fc.assert(
      fc.property(fc.string({ unit: chars, maxLength: 8 }), (s) => {
        expect(isDecimal(s)).toBe(grammar.test(s));
      }),
      { numRuns: 20000 },
    );
  });

  it('reads back every finite double as written by String()', () => {
    // String(-0) is "0" (ECMA-262 Number::toString), so -0 cannot come back as -0.
    const finite = fc.double({ noNaN: true, noDefaultInfinity: true }).filter((x) => !Object.is(x, -0));
    fc.assert(
      fc.property(finite, (x) => {
        expect(isDecimal(String(x))).toBe(true);
        expect(readNumber(String(x))).toEqual({ ok: true, value: x, decimalComma: false });
      }),
      { numRuns: 5000 },
    );
  });
});

describe('readNumber', () => {
  it('reads plain numbers, trimming spaces', () => {
    expect(readNumber('48.8566')).toEqual({ ok: true, value: 48.8566, decimalComma: false });
    expect(readNumber('  -2.5 ')).toEqual({ ok: true, value: -2.5, decimalComma: false });
    expect(readNumber('\t1e2\t')).toEqual({ ok: true, value: 100, decimalComma: false });
    expect(readNumber('+.5')).toEqual({ ok: true, value: 0.5, decimalComma: false });
  });

  it('says empty for an empty, blank or absent cell', () => {
    expect(readNumber('')).toEqual({ ok: false, reason: 'empty' });
    expect(readNumber('   ')).toEqual({ ok: false, reason: 'empty' });
    expect(readNumber(undefined)).toEqual({ ok: false, reason: 'empty' });
  });

  it('says not-finite for Infinity, NaN and numbers beyond a double', () => {
    for (const s of ['Infinity', '-Infinity', '+inf', 'INF', 'nan', 'NaN', '1e999', '-1e400']) {
      expect(readNumber(s), s).toEqual({ ok: false, reason: 'not-finite' });
    }
  });

  it('says not-a-number for other text', () => {
    for (const s of ['two', '0x10', '1,2,3', '48°51′', '1 000', '1.2.3', '--1', 'infinite']) {
      expect(readNumber(s), s).toEqual({ ok: false, reason: 'not-a-number' });
    }
  });

  it('reads a decimal comma only when allowed (a non-comma delimiter)', () => {
    expect(readNumber('48,8566')).toEqual({ ok: false, reason: 'not-a-number' });
    expect(readNumber('48,8566', true)).toEqual({ ok: true, value: 48.8566, decimalComma: true });
    expect(readNumber('-0,5', true)).toEqual({ ok: true, value: -0.5, decimalComma: true });
    expect(readNumber('+2,25', true)).toEqual({ ok: true, value: 2.25, decimalComma: true });
    // A point still reads as a point, and is not counted as a decimal comma.
    expect(readNumber('48.8566', true)).toEqual({ ok: true, value: 48.8566, decimalComma: false });
    // Neither a thousands separator pattern nor a bare comma is a decimal comma.
    expect(readNumber('1,234,5', true)).toEqual({ ok: false, reason: 'not-a-number' });
    expect(readNumber(',5', true)).toEqual({ ok: false, reason: 'not-a-number' });
    expect(readNumber('5,', true)).toEqual({ ok: false, reason: 'not-a-number' });
    expect(readNumber('1,5e3', true)).toEqual({ ok: false, reason: 'not-a-number' });
  });

  it('reads "d,d" as the same number as "d.d"', () => {
    fc.assert(
      fc.property(fc.nat(), fc.stringMatching(/^\d{1,9}$/), (whole, frac) => {
        const point = readNumber(`${whole}.${frac}`, true);
        const comma = readNumber(`${whole},${frac}`, true);
        expect(point.ok && comma.ok).toBe(true);
        if (point.ok && comma.ok) expect(comma.value).toBe(point.value);
      }),
      { numRuns: 2000 },
    );
  });
});
