/**
 * Number of distinct positions among unit vectors (interleaved), counting only up to `limit`:
 * the scan stops as soon as `limit` distinct ones are seen. Exact comparison of the coordinates,
 * by an open-addressing hash on their bits.
 */
export function countDistinctUpTo(units: Float64Array, limit: number): number {
  const n = units.length / 3;
  if (limit <= 0 || n === 0) return 0;
  const cap = Math.min(n, limit);
  let size = 16;
  while (size < cap * 2) size *= 2;
  const mask = size - 1;
  const table = new Int32Array(size).fill(-1);
  const scratch = new Float64Array(3);
  const bits = new Uint32Array(scratch.buffer);
  let distinct = 0;
  for (let i = 0; i < n; i++) {
    // "+ 0" turns -0 into 0, so that equal coordinates hash alike.
    scratch[0] = units[3 * i]! + 0;
    scratch[1] = units[3 * i + 1]! + 0;
    scratch[2] = units[3 * i + 2]! + 0;
    let h = 0x811c9dc5;
    for (let w = 0; w < 6; w++) h = Math.imul(h ^ bits[w]!, 0x01000193);
    h = (h ^ (h >>> 15)) & mask;
    for (;;) {
      const j = table[h]!;
      if (j < 0) {
        table[h] = i;
        distinct++;
        break;
      }
      if (units[3 * j] === units[3 * i] && units[3 * j + 1] === units[3 * i + 1] && units[3 * j + 2] === units[3 * i + 2]) break;
      h = (h + 1) & mask;
    }
    if (distinct >= cap) return distinct;
  }
  return distinct;
}
