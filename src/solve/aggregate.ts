/**
 * Coarse copies of a stop set for the workload-limited loop's first levels: stops merged by
 * cells of a grid, each cell one weighted point (its stops' demand-weighted mean direction,
 * their total demand).
 *
 * A random sample would do for plain k-means, but not under a balance band or capacity: there
 * the plan depends on how much demand each town holds, and a sample's town totals are off by
 * their sampling error (a town of 200 sampled stops by about 7%), which moves whole zones. Merged
 * cells keep every region's demand exact; only where inside its cell a stop lies is lost.
 * (Aggregating points to grid cells is the usual coarsening of multilevel location and
 * clustering methods; common practice, no single source.)
 */

export interface Aggregated {
  readonly units: Float64Array;
  readonly demand: Float64Array;
  readonly locked: Int32Array | null;
  /** Grid step (chord length on the unit sphere) of the cells. */
  readonly step: number;
}

/**
 * Sizes (cells) of the coarse copies of n stops for k zones, coarse to fine: from
 * max(4 000, 20 k) up by a factor of 5 while a copy stays under a quarter of the stops (none for
 * fewer stops). The limited plan's levels (src/solve/limited.ts) and the start prices of an
 * assignment step without prices (src/solve/capacity.ts) use them.
 */
export function coarseSizes(n: number, k: number): number[] {
  const sizes: number[] = [];
  for (let size = Math.max(4_000, 20 * k); size * 4 <= n; size *= 5) sizes.push(size);
  return sizes;
}

/**
 * Merges the free stops into about `target` cells (at most `target`, at least half of it where
 * the stops allow) of a cubic grid over the unit vectors; locked stops are kept as they are, each
 * with its zone. Stops of demand 0 count towards a cell's direction with a tiny weight so that a
 * cell of only such stops still has one. Deterministic: cells come out in order of first stop.
 */
export function aggregateStops(units: Float64Array, demand: Float64Array, locked: Int32Array | null, target: number): Aggregated {
  const n = demand.length;
  let free = 0;
  let minX = Infinity;
  let minY = Infinity;
  let minZ = Infinity;
  let maxX = -Infinity;
  let maxY = -Infinity;
  let maxZ = -Infinity;
  for (let i = 0; i < n; i++) {
    if (locked && locked[i]! >= 0) continue;
    free++;
    const x = units[3 * i]!;
    const y = units[3 * i + 1]!;
    const z = units[3 * i + 2]!;
    if (x < minX) minX = x;
    if (x > maxX) maxX = x;
    if (y < minY) minY = y;
    if (y > maxY) maxY = y;
    if (z < minZ) minZ = z;
    if (z > maxZ) maxZ = z;
  }
  const extent = Math.max(maxX - minX, maxY - minY, maxZ - minZ, 1e-12);
  const table = new CellTable(Math.min(free, Math.max(16, target)) * 2);
  const cellOf = new Int32Array(n);
  const count = (step: number): number => {
    table.clear();
    for (let i = 0; i < n; i++) {
      if (locked && locked[i]! >= 0) continue;
      const ix = Math.floor((units[3 * i]! - minX) / step);
      const iy = Math.floor((units[3 * i + 1]! - minY) / step);
      const iz = Math.floor((units[3 * i + 2]! - minZ) / step);
      cellOf[i] = table.slot(ix, iy, iz, target);
      if (cellOf[i]! < 0) return Infinity;
    }
    return table.size;
  };
  // Bisection on the grid step (in log scale): the finest grid with at most `target` cells.
  let lo = extent / 2 ** 20;
  let hi = extent;
  let best = hi;
  if (free > target) {
    for (let round = 0; round < 24; round++) {
      const mid = Math.sqrt(lo * hi);
      const cells = count(mid);
      if (cells <= target) {
        best = mid;
        hi = mid;
        if (cells >= 0.9 * target) break;
      } else lo = mid;
      if (hi / lo < 1.02) break;
    }
  } else best = extent / 2 ** 20;
  const cells = count(best);
  const lockedCount = n - free;
  const m = cells + lockedCount;
  const sx = new Float64Array(cells);
  const sy = new Float64Array(cells);
  const sz = new Float64Array(cells);
  const outDemand = new Float64Array(m);
  for (let i = 0; i < n; i++) {
    if (locked && locked[i]! >= 0) continue;
    const c = cellOf[i]!;
    const w = demand[i]! > 0 ? demand[i]! : 1e-9;
    sx[c]! += w * units[3 * i]!;
    sy[c]! += w * units[3 * i + 1]!;
    sz[c]! += w * units[3 * i + 2]!;
    outDemand[c]! += demand[i]!;
  }
  const outUnits = new Float64Array(3 * m);
  for (let c = 0; c < cells; c++) {
    const r = Math.hypot(sx[c]!, sy[c]!, sz[c]!);
    outUnits[3 * c] = sx[c]! / r;
    outUnits[3 * c + 1] = sy[c]! / r;
    outUnits[3 * c + 2] = sz[c]! / r;
  }
  let outLocked: Int32Array | null = null;
  if (lockedCount > 0) {
    outLocked = new Int32Array(m).fill(-1);
    let at = cells;
    for (let i = 0; i < n; i++) {
      if (!(locked![i]! >= 0)) continue;
      outUnits.set(units.subarray(3 * i, 3 * i + 3), 3 * at);
      outDemand[at] = demand[i]!;
      outLocked[at] = locked![i]!;
      at++;
    }
  }
  return { units: outUnits, demand: outDemand, locked: outLocked, step: best };
}

/** Open-addressing table of integer grid cells -> cell number, in typed arrays. */
class CellTable {
  private keysX: Int32Array;
  private keysY: Int32Array;
  private keysZ: Int32Array;
  private values: Int32Array;
  private mask: number;
  size = 0;

  constructor(expected: number) {
    let cap = 16;
    while (cap < expected * 2) cap *= 2;
    this.mask = cap - 1;
    this.keysX = new Int32Array(cap);
    this.keysY = new Int32Array(cap);
    this.keysZ = new Int32Array(cap);
    this.values = new Int32Array(cap).fill(-1);
  }

  clear(): void {
    this.values.fill(-1);
    this.size = 0;
  }

  /** The cell number of (x, y, z), new ones numbered in order; -1 once more than `limit` cells exist. */
  slot(x: number, y: number, z: number, limit: number): number {
    let h = (Math.imul(x, 0x9e3779b1) ^ Math.imul(y, 0x85ebca77) ^ Math.imul(z, 0xc2b2ae3d)) >>> 0;
    for (;;) {
      h &= this.mask;
      const v = this.values[h]!;
      if (v < 0) {
        if (this.size >= limit) return -1;
        this.keysX[h] = x;
        this.keysY[h] = y;
        this.keysZ[h] = z;
        this.values[h] = this.size;
        return this.size++;
      }
      if (this.keysX[h] === x && this.keysY[h] === y && this.keysZ[h] === z) return v;
      h++;
    }
  }
}
