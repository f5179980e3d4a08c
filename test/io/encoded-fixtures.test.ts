import { readFileSync } from 'node:fs';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import { ENCODED_FIXTURES, FIXTURES_DIR } from '../fixtures/make-encoded.js';

// The byte-exact fixtures are committed; if an editor or a git line-ending setting rewrote them,
// the BOM, CRLF, Windows-1252 and UTF-16LE cases would silently test something else.
describe('committed encoded fixtures', () => {
  it.each(Object.keys(ENCODED_FIXTURES))('%s holds the bytes make-encoded.ts writes', (name) => {
    const onDisk = new Uint8Array(readFileSync(path.join(FIXTURES_DIR, name)));
    expect(Buffer.from(onDisk).toString('hex')).toBe(Buffer.from(ENCODED_FIXTURES[name]!).toString('hex'));
  });

  it('the CRLF, BOM, Windows-1252 and UTF-16LE markers are really there', () => {
    const crlf = readFileSync(path.join(FIXTURES_DIR, 'good/csv-crlf.csv'));
    expect(crlf.includes('\r\n')).toBe(true);
    expect(crlf.toString('latin1').replace(/\r\n/g, '')).not.toMatch(/\n/);
    expect([...readFileSync(path.join(FIXTURES_DIR, 'good/csv-bom.csv')).subarray(0, 3)]).toEqual([0xef, 0xbb, 0xbf]);
    const latin1 = readFileSync(path.join(FIXTURES_DIR, 'good/csv-latin1.csv'));
    expect([0xe9, 0x9c, 0x80, 0xfc].every((b) => latin1.includes(b))).toBe(true);
    expect([...readFileSync(path.join(FIXTURES_DIR, 'good/txt-utf16le.txt')).subarray(0, 4)]).toEqual([0xff, 0xfe, 0x69, 0x00]);
  });
});
