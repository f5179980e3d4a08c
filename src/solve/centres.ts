import { angleFromChord } from '../geo/distance.js';

/**
 * New centres for a given assignment: each free zone's centre moves to the normalised
 * demand-weighted vector mean of its stops (the minimiser of squared chord length), then, with
 * the 'arc' rule, by Karcher steps towards the minimiser of demand x squared great-circle
 * distance, each step halved until the zone's sum does not rise. Fixed zones and empty zones keep
 * their centres; a zone whose stops all have demand 0 takes their plain mean. Writes into
 * `centres` (interleaved unit vectors) and returns the largest chord a centre moved.
 */
export function updateCentres(
  units: Float64Array,
  demand: Float64Array,
  assignment: Int32Array,
  centres: Float64Array,
  fixed: Uint8Array | null,
  rule: 'mean' | 'arc',
  karcherSteps = 3,
): number {
  const n = demand.length;
  const stop = new Int32Array(n);
  for (let i = 0; i < n; i++) stop[i] = i;
  return updateCentresWeighted(units, { stop, zone: assignment, weight: demand }, centres, fixed, rule, karcherSteps);
}

/**
 * Parts of stops in zones: stop index, zone, and the demand that part carries (a whole stop's
 * demand, or the share of a stop the LP split).
 */
export interface WeightedParts {
  readonly stop: Int32Array;
  readonly zone: Int32Array;
  readonly weight: Float64Array;
}

/** As updateCentres, for parts of stops with weights (a fractional assignment). */
export function updateCentresWeighted(
  units: Float64Array,
  parts: WeightedParts,
  centres: Float64Array,
  fixed: Uint8Array | null,
  rule: 'mean' | 'arc',
  karcherSteps = 3,
): number {
  const n = parts.stop.length;
  const k = centres.length / 3;
  const sx = new Float64Array(k);
  const sy = new Float64Array(k);
  const sz = new Float64Array(k);
  const sw = new Float64Array(k);
  const px = new Float64Array(k);
  const py = new Float64Array(k);
  const pz = new Float64Array(k);
  const count = new Int32Array(k);
  for (let e = 0; e < n; e++) {
    const i = parts.stop[e]!;
    const a = parts.zone[e]!;
    const w = parts.weight[e]!;
    const x = units[3 * i]!;
    const y = units[3 * i + 1]!;
    const z = units[3 * i + 2]!;
    sx[a]! += w * x;
    sy[a]! += w * y;
    sz[a]! += w * z;
    sw[a]! += w;
    px[a]! += x;
    py[a]! += y;
    pz[a]! += z;
    count[a]!++;
  }
  const old = centres.slice();
  for (let j = 0; j < k; j++) {
    if ((fixed && fixed[j]) || count[j] === 0) continue;
    const weighted = sw[j]! > 1e-300;
    const x = weighted ? sx[j]! : px[j]!;
    const y = weighted ? sy[j]! : py[j]!;
    const z = weighted ? sz[j]! : pz[j]!;
    const norm = Math.sqrt(x * x + y * y + z * z);
    if (!(norm > 1e-12 * (weighted ? sw[j]! : count[j]!))) continue;
    centres[3 * j] = x / norm;
    centres[3 * j + 1] = y / norm;
    centres[3 * j + 2] = z / norm;
  }
  if (rule === 'arc') for (let s = 0; s < karcherSteps; s++) if (karcherStepAll(units, parts, centres, fixed) < 1e-13) break;
  let maxMove = 0;
  for (let j = 0; j < k; j++) {
    const dx = centres[3 * j]! - old[3 * j]!;
    const dy = centres[3 * j + 1]! - old[3 * j + 1]!;
    const dz = centres[3 * j + 2]! - old[3 * j + 2]!;
    maxMove = Math.max(maxMove, Math.sqrt(dx * dx + dy * dy + dz * dz));
  }
  return maxMove;
}

/**
 * One Karcher (Riemannian gradient) step of every free zone's centre for the weighted sum of
 * squared central angles of its stops, with step halving so that no zone's sum rises.
 * Returns the largest chord a centre moved.
 */
export function karcherStepAll(units: Float64Array, parts: WeightedParts, centres: Float64Array, fixed: Uint8Array | null): number {
  const n = parts.stop.length;
  const k = centres.length / 3;
  const gx = new Float64Array(k);
  const gy = new Float64Array(k);
  const gz = new Float64Array(k);
  const w0 = new Float64Array(k);
  const f0 = new Float64Array(k);
  for (let e = 0; e < n; e++) {
    const i = parts.stop[e]!;
    const w = parts.weight[e]!;
    if (w === 0) continue;
    const a = parts.zone[e]!;
    if (fixed && fixed[a]) continue;
    const cx = centres[3 * a]!;
    const cy = centres[3 * a + 1]!;
    const cz = centres[3 * a + 2]!;
    const x = units[3 * i]!;
    const y = units[3 * i + 1]!;
    const z = units[3 * i + 2]!;
    const dx = x - cx;
    const dy = y - cy;
    const dz = z - cz;
    const c2 = dx * dx + dy * dy + dz * dz;
    const c = Math.sqrt(c2);
    const theta = angleFromChord(c);
    // Log map: the tangent part x - (c.x) c, of length sin(theta), scaled to length theta.
    const dot = 1 - 0.5 * c2;
    const s = c * Math.sqrt(Math.max(0, 1 - 0.25 * c2));
    const scale = s > 1e-300 ? (w * theta) / s : w;
    gx[a]! += scale * (x - dot * cx);
    gy[a]! += scale * (y - dot * cy);
    gz[a]! += scale * (z - dot * cz);
    w0[a]! += w;
    f0[a]! += w * theta * theta;
  }
  const step = new Float64Array(k).fill(1);
  const next = new Float64Array(3 * k);
  const f1 = new Float64Array(k);
  let pending: number[] = [];
  for (let j = 0; j < k; j++) if (w0[j]! > 0) pending.push(j);
  let maxMove = 0;
  for (let attempt = 0; attempt < 6 && pending.length > 0; attempt++) {
    const trying = new Uint8Array(k);
    for (const j of pending) {
      const tx = (gx[j]! / w0[j]!) * step[j]!;
      const ty = (gy[j]! / w0[j]!) * step[j]!;
      const tz = (gz[j]! / w0[j]!) * step[j]!;
      const t = Math.sqrt(tx * tx + ty * ty + tz * tz);
      if (!(t > 1e-15)) continue;
      const ct = Math.cos(t);
      const st = Math.sin(t) / t;
      let x = ct * centres[3 * j]! + st * tx;
      let y = ct * centres[3 * j + 1]! + st * ty;
      let z = ct * centres[3 * j + 2]! + st * tz;
      const norm = Math.sqrt(x * x + y * y + z * z);
      x /= norm;
      y /= norm;
      z /= norm;
      next[3 * j] = x;
      next[3 * j + 1] = y;
      next[3 * j + 2] = z;
      f1[j] = 0;
      trying[j] = 1;
    }
    for (let e = 0; e < n; e++) {
      const a = parts.zone[e]!;
      if (trying[a] !== 1) continue;
      const i = parts.stop[e]!;
      const dx = units[3 * i]! - next[3 * a]!;
      const dy = units[3 * i + 1]! - next[3 * a + 1]!;
      const dz = units[3 * i + 2]! - next[3 * a + 2]!;
      const theta = angleFromChord(Math.sqrt(dx * dx + dy * dy + dz * dz));
      f1[a]! += parts.weight[e]! * theta * theta;
    }
    const still: number[] = [];
    for (const j of pending) {
      if (trying[j] !== 1) continue;
      if (f1[j]! <= f0[j]!) {
        const dx = next[3 * j]! - centres[3 * j]!;
        const dy = next[3 * j + 1]! - centres[3 * j + 1]!;
        const dz = next[3 * j + 2]! - centres[3 * j + 2]!;
        maxMove = Math.max(maxMove, Math.sqrt(dx * dx + dy * dy + dz * dz));
        centres[3 * j] = next[3 * j]!;
        centres[3 * j + 1] = next[3 * j + 1]!;
        centres[3 * j + 2] = next[3 * j + 2]!;
      } else {
        step[j] = step[j]! * 0.5;
        still.push(j);
      }
    }
    pending = still;
  }
  return maxMove;
}
