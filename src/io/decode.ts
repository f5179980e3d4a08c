/** Text of a file and the encoding it was read as. */
export interface DecodedText {
  readonly text: string;
  readonly encoding: 'utf-8' | 'utf-16le' | 'utf-16be' | 'windows-1252';
  /** Set when the bytes were not valid UTF-8 and were read as Windows-1252 instead. */
  readonly fallbackAt?: { line: number; byte: number };
  /** Set when the file had no byte order mark but its bytes are plainly UTF-16 (see utf16WithoutBom). */
  readonly noBom?: true;
}

/**
 * Decodes file bytes: a UTF-8 or UTF-16 byte order mark decides; otherwise UTF-8 when the bytes
 * are valid UTF-8, else Windows-1252 (the usual spreadsheet export on Western European systems,
 * a superset of printable Latin-1), which never fails. The BOM is removed.
 */
export function decodeText(bytes: Uint8Array): DecodedText {
  if (bytes[0] === 0xef && bytes[1] === 0xbb && bytes[2] === 0xbf) {
    return { text: new TextDecoder('utf-8').decode(bytes.subarray(3)), encoding: 'utf-8' };
  }
  if (bytes[0] === 0xff && bytes[1] === 0xfe) return { text: new TextDecoder('utf-16le').decode(bytes.subarray(2)), encoding: 'utf-16le' };
  if (bytes[0] === 0xfe && bytes[1] === 0xff) return { text: new TextDecoder('utf-16le').decode(swapPairs(bytes.subarray(2))), encoding: 'utf-16be' };
  const bomless = utf16WithoutBom(bytes);
  if (bomless === 'utf-16le') return { text: new TextDecoder('utf-16le').decode(bytes), encoding: 'utf-16le', noBom: true };
  if (bomless === 'utf-16be') return { text: new TextDecoder('utf-16le').decode(swapPairs(bytes)), encoding: 'utf-16be', noBom: true };
  try {
    return { text: new TextDecoder('utf-8', { fatal: true }).decode(bytes), encoding: 'utf-8' };
  } catch {
    const byte = firstInvalidUtf8(bytes);
    let line = 1;
    for (let i = 0; i < byte; i++) if (bytes[i] === 10) line++;
    return { text: decodeWindows1252(bytes), encoding: 'windows-1252', fallbackAt: { line, byte } };
  }
}

function swapPairs(body: Uint8Array): Uint8Array {
  const swapped = new Uint8Array(body.length - (body.length % 2));
  for (let i = 0; i + 1 < body.length; i += 2) {
    swapped[i] = body[i + 1]!;
    swapped[i + 1] = body[i]!;
  }
  return swapped;
}

/**
 * UTF-16 without a byte order mark, as some exports write it: text of mostly ASCII characters has
 * a zero byte in every other place (the high byte of each code unit), which UTF-8 or Windows-1252
 * text of a stops file never has. Judged on the first 4 KB: at least 90% of the odd (LE) or even
 * (BE) bytes zero and at most 5% of the others (thresholds chosen by us, no source).
 */
export function utf16WithoutBom(bytes: Uint8Array): 'utf-16le' | 'utf-16be' | null {
  const n = Math.min(bytes.length, 4096) & ~1;
  if (n < 8) return null;
  let zeroEven = 0;
  let zeroOdd = 0;
  for (let i = 0; i < n; i += 2) {
    if (bytes[i] === 0) zeroEven++;
    if (bytes[i + 1] === 0) zeroOdd++;
  }
  const pairs = n / 2;
  if (zeroOdd >= 0.9 * pairs && zeroEven <= 0.05 * pairs) return 'utf-16le';
  if (zeroEven >= 0.9 * pairs && zeroOdd <= 0.05 * pairs) return 'utf-16be';
  return null;
}

/**
 * WHATWG Encoding, index-windows-1252, bytes 0x80-0x9f (0x81 0x8d 0x8f 0x90 0x9d stay the C1
 * control of the same number). Node 20.18.3+ and 22.13+ decode 'windows-1252' as ISO-8859-1,
 * turning these bytes into invisible controls (nodejs/node#56542, #60888), so they are mapped here.
 */
const WINDOWS_1252_80_9F =
  '\u20ac\u0081\u201a\u0192\u201e\u2026\u2020\u2021\u02c6\u2030\u0160\u2039\u0152\u008d\u017d\u008f' +
  '\u0090\u2018\u2019\u201c\u201d\u2022\u2013\u2014\u02dc\u2122\u0161\u203a\u0153\u009d\u017e\u0178';

function decodeWindows1252(bytes: Uint8Array): string {
  return new TextDecoder('windows-1252').decode(bytes).replace(/[\u0080-\u009f]/g, (c) => WINDOWS_1252_80_9F[c.charCodeAt(0) - 0x80]!);
}

/** Offset of the first byte that breaks UTF-8 (an approximation good enough for a message). */
function firstInvalidUtf8(b: Uint8Array): number {
  let i = 0;
  while (i < b.length) {
    const c = b[i]!;
    const len = c < 0x80 ? 1 : c >= 0xc2 && c < 0xe0 ? 2 : c >= 0xe0 && c < 0xf0 ? 3 : c >= 0xf0 && c < 0xf5 ? 4 : 0;
    if (len === 0) return i;
    for (let j = 1; j < len; j++) if (((b[i + j] ?? 0) & 0xc0) !== 0x80) return i;
    i += len;
  }
  return b.length;
}
