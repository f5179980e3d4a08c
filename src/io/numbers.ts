/** True for plain decimal notation: [+-] digits [. digits] [e [+-] digits], at least one digit before e. */
export function isDecimal(s: string): boolean {
  const n = s.length;
  let i = 0;
  let c = s.charCodeAt(0);
  if (c === 43 || c === 45) i++;
  let digits = 0;
  let dot = false;
  for (; i < n; i++) {
    c = s.charCodeAt(i);
    if (c >= 48 && c <= 57) digits++;
    else if (c === 46 && !dot) dot = true;
    else break;
  }
  if (digits === 0) return false;
  if (i === n) return true;
  if (c !== 101 && c !== 69) return false;
  i++;
  c = s.charCodeAt(i);
  if (c === 43 || c === 45) i++;
  const expStart = i;
  for (; i < n; i++) {
    c = s.charCodeAt(i);
    if (c < 48 || c > 57) return false;
  }
  return i > expStart;
}

const DECIMAL_COMMA = /^[+-]?\d+,\d+$/;

/** Result of reading one numeric cell. */
export type NumberCell =
  | { readonly ok: true; readonly value: number; readonly decimalComma: boolean }
  | { readonly ok: false; readonly reason: 'empty' | 'not-a-number' | 'not-finite' };

/**
 * Reads a number written in plain decimal notation ("12", "-0.5", "1e3"). No hex, no "Infinity",
 * no thousands separators. With `allowDecimalComma`, "48,85" reads as 48.85 (only safe when the
 * column delimiter is not a comma).
 */
export function readNumber(raw: string | undefined, allowDecimalComma = false): NumberCell {
  const s = (raw ?? '').trim();
  if (s === '') return { ok: false, reason: 'empty' };
  if (isDecimal(s)) {
    const v = Number(s);
    return Number.isFinite(v) ? { ok: true, value: v, decimalComma: false } : { ok: false, reason: 'not-finite' };
  }
  if (allowDecimalComma && DECIMAL_COMMA.test(s)) return { ok: true, value: Number(s.replace(',', '.')), decimalComma: true };
  if (/^[+-]?(inf(inity)?|nan)$/i.test(s)) return { ok: false, reason: 'not-finite' };
  return { ok: false, reason: 'not-a-number' };
}
