import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { decodeText } from '../../src/io/decode.js';

const bytes = (...b: number[]): Uint8Array => Uint8Array.from(b);
const utf8 = (s: string): Uint8Array => new Uint8Array(Buffer.from(s, 'utf8'));

describe('decodeText', () => {
  it('reads UTF-8 without a BOM', () => {
    expect(decodeText(utf8('id,lat\nZoë,48.85\n'))).toEqual({ text: 'id,lat\nZoë,48.85\n', encoding: 'utf-8' });
  });

  it('removes a UTF-8 BOM (EF BB BF)', () => {
    expect(decodeText(bytes(0xef, 0xbb, 0xbf, 0x69, 0x64))).toEqual({ text: 'id', encoding: 'utf-8' });
    expect(decodeText(bytes(0xef, 0xbb, 0xbf))).toEqual({ text: '', encoding: 'utf-8' });
  });

  it('reads UTF-16LE after its BOM (FF FE), surrogate pairs included', () => {
    const text = 'id\tlat\r\nŁódź\t51.76\r\n📦\t1\r\n';
    const b = Uint8Array.from([0xff, 0xfe, ...Buffer.from(text, 'utf16le')]);
    expect(decodeText(b)).toEqual({ text, encoding: 'utf-16le' });
  });

  it('reads UTF-16BE after its BOM (FE FF)', () => {
    const text = 'id,lat\nŁódź,51.76\n📦,1\n';
    const le = Buffer.from(text, 'utf16le');
    const be = new Uint8Array(le.length);
    for (let i = 0; i < le.length; i += 2) {
      be[i] = le[i + 1]!;
      be[i + 1] = le[i]!;
    }
    expect(decodeText(Uint8Array.from([0xfe, 0xff, ...be]))).toEqual({ text, encoding: 'utf-16be' });
    // An odd last byte (a cut file) is dropped, not misread.
    expect(decodeText(Uint8Array.from([0xfe, 0xff, ...be, 0x00])).text).toBe(text);
  });

  it('falls back to Windows-1252 for bytes that are not UTF-8, saying where', () => {
    // "id\nCafé" with é as the single byte 0xe9 on line 2, at byte 6.
    const d = decodeText(bytes(0x69, 0x64, 0x0a, 0x43, 0x61, 0x66, 0xe9));
    expect(d).toEqual({ text: 'id\nCafé', encoding: 'windows-1252', fallbackAt: { line: 2, byte: 6 } });
  });

  it('maps 0x80-0x9f as WHATWG windows-1252 does, not as ISO-8859-1 controls', () => {
    // WHATWG Encoding Standard, index-windows-1252 (pointers 0-31); 0x81 0x8d 0x8f 0x90 0x9d map
    // to the C1 control of the same number. Node 20.18.3+ gets this wrong (nodejs/node#60888).
    const expected = '€\u0081‚ƒ„…†‡ˆ‰Š‹Œ\u008dŽ\u008f\u0090‘’“”•–—˜™š›œ\u009džŸ';
    const all = Uint8Array.from({ length: 32 }, (_, i) => 0x80 + i);
    const d = decodeText(all);
    expect(d.encoding).toBe('windows-1252');
    expect([...d.text].map((c) => c.codePointAt(0))).toEqual([...expected].map((c) => c.codePointAt(0)));
  });

  it('maps 0xa0-0xff to the same code points (the Latin-1 half of windows-1252)', () => {
    const all = Uint8Array.from({ length: 96 }, (_, i) => 0xa0 + i);
    const d = decodeText(all);
    expect(d.encoding).toBe('windows-1252');
    expect([...d.text].map((c) => c.codePointAt(0))).toEqual(Array.from(all));
  });

  it('finds the first bad byte after valid multi-byte UTF-8', () => {
    // "é\n" in UTF-8 (c3 a9 0a), then a lone continuation byte 0x80 on line 2.
    const d = decodeText(bytes(0xc3, 0xa9, 0x0a, 0x41, 0x80));
    expect(d.encoding).toBe('windows-1252');
    expect(d.fallbackAt).toEqual({ line: 2, byte: 4 });
    // The whole file is then read as windows-1252, the UTF-8 pair included (a mixed file).
    expect(d.text).toBe('Ã©\nA€');
  });

  it('round-trips any text written as UTF-8, with or without BOM', () => {
    fc.assert(
      fc.property(fc.oneof(fc.string({ unit: 'grapheme', maxLength: 40 }), fc.string({ unit: fc.constantFrom('\uFEFF', 'a', 'é', '📦'), maxLength: 4 })), fc.boolean(), (text, bom) => {
        const b = bom ? Uint8Array.from([0xef, 0xbb, 0xbf, ...utf8(text)]) : utf8(text);
        const d = decodeText(b);
        // Leading U+FEFF are taken for BOMs: decodeText removes one, and TextDecoder's own BOM
        // sniffing (WHATWG Encoding, "decode") one more, so text starting with U+FEFF loses it.
        let expected = (bom ? '\uFEFF' : '') + text;
        for (let i = 0; i < 2 && expected.startsWith('\uFEFF'); i++) expected = expected.slice(1);
        expect(d).toEqual({ text: expected, encoding: 'utf-8' });
      }),
      { numRuns: 2000 },
    );
  });
});
