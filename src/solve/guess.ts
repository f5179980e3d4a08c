/**
 * A good first guess of every stop's nearest centre, for starting from given centres: the sphere
 * is cut into cube-map cells (6 faces x G x G) and each stop takes the nearest centre of its
 * cell's middle. The engine's first assignment step then searches outwards from this guess and
 * makes it exact, visiting only a few centres per stop.
 */
export function guessAssignment(units: Float64Array, centres: Float64Array, grid = 64): Int32Array {
  const n = units.length / 3;
  const k = centres.length / 3;
  const cells = new Int32Array(6 * grid * grid);
  for (let face = 0; face < 6; face++) {
    for (let a = 0; a < grid; a++) {
      for (let b = 0; b < grid; b++) {
        const s = ((a + 0.5) / grid) * 2 - 1;
        const t = ((b + 0.5) / grid) * 2 - 1;
        const [x, y, z] = faceToVector(face, s, t);
        let best = 0;
        let bestDot = -Infinity;
        for (let j = 0; j < k; j++) {
          const d = x * centres[3 * j]! + y * centres[3 * j + 1]! + z * centres[3 * j + 2]!;
          if (d > bestDot) {
            bestDot = d;
            best = j;
          }
        }
        cells[(face * grid + a) * grid + b] = best;
      }
    }
  }
  const out = new Int32Array(n);
  for (let i = 0; i < n; i++) out[i] = cells[cellOf(units[3 * i]!, units[3 * i + 1]!, units[3 * i + 2]!, grid)]!;
  return out;
}

function faceToVector(face: number, s: number, t: number): [number, number, number] {
  let v: [number, number, number];
  switch (face) {
    case 0: v = [1, s, t]; break;
    case 1: v = [-1, s, t]; break;
    case 2: v = [s, 1, t]; break;
    case 3: v = [s, -1, t]; break;
    case 4: v = [s, t, 1]; break;
    default: v = [s, t, -1];
  }
  const norm = Math.hypot(v[0], v[1], v[2]);
  return [v[0] / norm, v[1] / norm, v[2] / norm];
}

function cellOf(x: number, y: number, z: number, grid: number): number {
  const ax = Math.abs(x);
  const ay = Math.abs(y);
  const az = Math.abs(z);
  let face: number;
  let s: number;
  let t: number;
  if (ax >= ay && ax >= az) {
    face = x >= 0 ? 0 : 1;
    s = y / ax;
    t = z / ax;
  } else if (ay >= az) {
    face = y >= 0 ? 2 : 3;
    s = x / ay;
    t = z / ay;
  } else {
    face = z >= 0 ? 4 : 5;
    s = x / az;
    t = y / az;
  }
  const a = Math.min(grid - 1, Math.max(0, Math.floor(((s + 1) / 2) * grid)));
  const b = Math.min(grid - 1, Math.max(0, Math.floor(((t + 1) / 2) * grid)));
  return (face * grid + a) * grid + b;
}
