import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import Papa from 'papaparse';
import { csvCell, decimals, deg6 } from '../../src/io/format.js';

/**
 * The reference: ECMA-262 Number.prototype.toFixed rounds the exact value of x to `places`
 * decimals (the larger magnitude on a tie), and String(Number(...)) drops the trailing zeros.
 */
const reference = (x: number, places: number): string => String(Number(x.toFixed(places)));

describe('decimals', () => {
  it.each([
    [48.8566, 6, '48.8566'],
    [2.35220001, 6, '2.3522'],
    [-0.1234567, 6, '-0.123457'],
    [10, 6, '10'],
    [0.1 + 0.2, 6, '0.3'],
    [-0, 6, '0'],
    [-1e-7, 6, '0'],
    [1e-6, 6, '0.000001'],
    [999999999.9999996, 6, '1000000000'],
    [12.3456, 3, '12.346'],
    [12.3454, 3, '12.345'],
    [Number.NaN, 6, 'NaN'],
    [Number.POSITIVE_INFINITY, 6, 'Infinity'],
    [-1e21, 6, '-1e+21'],
  ] as const)('decimals(%d, %d) is %j', (x, places, text) => {
    expect(decimals(x, places)).toBe(text);
    expect(reference(x, places)).toBe(text);
  });

  // Found by the properties below (and fixed): the scaled value x * 10^places is itself rounded,
  // so a 7th decimal 5 could round either way, and Math.round sent negative ties up, not away
  // from zero. 5e-7 as a double is just below 5e-7. Beyond 1e9 the old fallback
  // Math.round(x * 1e6) / 1e6 lost digits.
  it.each([
    [-135.8743905, 6, '-135.874391'],
    [-30.6676825, 6, '-30.667683'],
    [5e-7, 6, '0'],
    [-2.5, 0, '-3'],
    [2.5, 0, '3'],
    [1705201812012918.5, 6, '1705201812012918.5'],
    [7145471309973950000, 6, '7145471309973950000'],
  ] as const)('decimals(%d, %d) is %j (regression)', (x, places, text) => {
    expect(reference(x, places)).toBe(text);
    expect(decimals(x, places)).toBe(text);
  });

  it('equals String(Number(x.toFixed(6))) for any double', () => {
    fc.assert(
      fc.property(fc.double(), (x) => {
        expect(decimals(x, 6)).toBe(reference(x, 6));
      }),
      { numRuns: 50_000 },
    );
  });

  it('equals String(Number(x.toFixed(6))) for coordinates written with 7 decimals (many near-ties)', () => {
    const seventh = fc.integer({ min: -1_800_000_000, max: 1_800_000_000 }).map((k) => k / 1e7);
    fc.assert(
      fc.property(seventh, (x) => {
        expect(decimals(x, 6)).toBe(reference(x, 6));
      }),
      { numRuns: 50_000 },
    );
  });

  it('equals String(Number(x.toFixed(6))) at halves of the 6th decimal, of either sign, up to 1e9', () => {
    const half = fc.integer({ min: -1_000_000_000, max: 1_000_000_000 }).chain((whole) =>
      fc.integer({ min: 0, max: 999_999 }).map((micro) => whole + (micro + 0.5) / 1e6),
    );
    fc.assert(
      fc.property(half, (x) => {
        expect(decimals(x, 6)).toBe(reference(x, 6));
      }),
      { numRuns: 50_000 },
    );
  });

  it('equals String(Number(x.toFixed(places))) for 0 to 6 places over ordinary magnitudes', () => {
    const magnitude = fc.double({ min: -2e9, max: 2e9, noNaN: true });
    fc.assert(
      fc.property(magnitude, fc.integer({ min: 0, max: 6 }), (x, places) => {
        expect(decimals(x, places)).toBe(reference(x, places));
      }),
      { numRuns: 50_000 },
    );
  });

  it('deg6 writes a coordinate with 6 decimals (RFC 7946 section 11.2: about 10 cm)', () => {
    expect(deg6(2.35220449)).toBe('2.352204');
    expect(deg6(-179.9999996)).toBe('-180');
  });
});

describe('csvCell', () => {
  it.each([
    ['P1', ',', 'P1'],
    ['', ',', ''],
    ['Zoë 1', ',', 'Zoë 1'],
    // RFC 4180 section 2.6: fields with the delimiter, double quotes or line breaks are quoted.
    ['Rue de Rivoli, 1', ',', '"Rue de Rivoli, 1"'],
    ['two\nlines', ',', '"two\nlines"'],
    ['two\r\nlines', ',', '"two\r\nlines"'],
    ['cr\ronly', ',', '"cr\ronly"'],
    // RFC 4180 section 2.7: a double quote inside is written twice.
    ['say "hi"', ',', '"say ""hi"""'],
    ['"', ',', '""""'],
    // Edge spaces are kept by quoting (RFC 4180 section 2.4 keeps them; many readers trim).
    [' lead', ',', '" lead"'],
    ['trail\t', ',', '"trail\t"'],
    ['in side', ',', 'in side'],
    // Only the delimiter in use needs quoting.
    ['a,b', ';', 'a,b'],
    ['a;b', ';', '"a;b"'],
    ['a;b', ',', 'a;b'],
    ['a\tb', '\t', '"a\tb"'],
  ] as const)('csvCell(%j, %j) is %j', (s, d, out) => {
    expect(csvCell(s, d)).toBe(out);
  });

  it('round-trips through an RFC 4180 reader (papaparse, as the importer uses it)', () => {
    const unit = fc.constantFrom('a', 'é', '📦', ',', ';', '\t', '"', '\n', '\r', ' ', 'x');
    fc.assert(
      fc.property(fc.array(fc.string({ unit, maxLength: 6 }), { minLength: 1, maxLength: 5 }), fc.constantFrom(',', ';', '\t'), (cells, d) => {
        // A last plain cell keeps the row from being a single empty field.
        const line = [...cells, 'end'].map((c) => csvCell(c, d)).join(d);
        const parsed = Papa.parse<string[]>(line, { delimiter: d, newline: '\n' });
        expect(parsed.errors).toEqual([]);
        expect(parsed.data).toEqual([[...cells, 'end']]);
      }),
      { numRuns: 5000 },
    );
  });
});
