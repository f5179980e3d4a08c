import type { Unit3 } from './unit.js';

/**
 * Demand-weighted mean direction of unit vectors (interleaved x y z), normalised back to the
 * sphere. It is the exact minimiser of the weighted sum of squared chord lengths. Returns null
 * when the weighted sum vector is (numerically) zero, e.g. for two antipodal points of equal
 * weight: the mean is then undefined, and no wrong number is returned for it.
 */
export function sphericalMean(units: ArrayLike<number>, weights?: ArrayLike<number>): Unit3 | null {
  const n = units.length / 3;
  let sx = 0;
  let sy = 0;
  let sz = 0;
  let sw = 0;
  for (let i = 0; i < n; i++) {
    const w = weights ? weights[i]! : 1;
    sx += w * units[3 * i]!;
    sy += w * units[3 * i + 1]!;
    sz += w * units[3 * i + 2]!;
    sw += w;
  }
  const norm = Math.hypot(sx, sy, sz);
  if (!(sw > 0) || norm <= 1e-12 * sw) return null;
  return [sx / norm, sy / norm, sz / norm];
}

/**
 * One Riemannian gradient step of the weighted squared-arc objective at centre c, with
 * backtracking so that the objective never rises. Writes the new centre into `c` and returns the
 * weighted sum of squared central angles (radians^2) at the returned centre.
 *
 * `visit(f)` must call f(x, y, z, w) for every member point; it is called one or more times.
 */
export function karcherStep(
  c: Float64Array | number[],
  visit: (f: (x: number, y: number, z: number, w: number) => void) => void,
): number {
  const cx = c[0]!;
  const cy = c[1]!;
  const cz = c[2]!;
  let gx = 0;
  let gy = 0;
  let gz = 0;
  let sw = 0;
  let f0 = 0;
  visit((x, y, z, w) => {
    const d = cx * x + cy * y + cz * z;
    const vx = x - d * cx;
    const vy = y - d * cy;
    const vz = z - d * cz;
    const s = Math.hypot(vx, vy, vz); // sin(theta)
    const theta = Math.atan2(s, d);
    const k = s > 1e-300 ? theta / s : 1;
    gx += w * k * vx;
    gy += w * k * vy;
    gz += w * k * vz;
    sw += w;
    f0 += w * theta * theta;
  });
  if (!(sw > 0)) return 0;
  gx /= sw;
  gy /= sw;
  gz /= sw;
  let step = 1;
  for (let attempt = 0; attempt < 8; attempt++, step *= 0.5) {
    const tx = gx * step;
    const ty = gy * step;
    const tz = gz * step;
    const t = Math.hypot(tx, ty, tz);
    if (t < 1e-16) return f0;
    const ct = Math.cos(t);
    const st = Math.sin(t) / t;
    let nx = ct * cx + st * tx;
    let ny = ct * cy + st * ty;
    let nz = ct * cz + st * tz;
    const nn = Math.hypot(nx, ny, nz);
    nx /= nn;
    ny /= nn;
    nz /= nn;
    let f1 = 0;
    visit((x, y, z, w) => {
      const ax = ny * z - nz * y;
      const ay = nz * x - nx * z;
      const az = nx * y - ny * x;
      const theta = Math.atan2(Math.hypot(ax, ay, az), nx * x + ny * y + nz * z);
      f1 += w * theta * theta;
    });
    if (f1 <= f0) {
      c[0] = nx;
      c[1] = ny;
      c[2] = nz;
      return f1;
    }
  }
  return f0;
}

/**
 * Weighted Karcher (Frechet) mean: the point minimising the weighted sum of squared great-circle
 * distances, found by gradient steps from the normalised vector mean. Null where the vector mean
 * is undefined.
 */
export function karcherMean(
  units: ArrayLike<number>,
  weights?: ArrayLike<number>,
  options: { maxSteps?: number; toleranceRad?: number } = {},
): Unit3 | null {
  const start = sphericalMean(units, weights);
  if (!start) return null;
  const c = [...start];
  const n = units.length / 3;
  const visit = (f: (x: number, y: number, z: number, w: number) => void): void => {
    for (let i = 0; i < n; i++) f(units[3 * i]!, units[3 * i + 1]!, units[3 * i + 2]!, weights ? weights[i]! : 1);
  };
  const maxSteps = options.maxSteps ?? 50;
  const tol = options.toleranceRad ?? 1e-12;
  for (let s = 0; s < maxSteps; s++) {
    const before = [c[0]!, c[1]!, c[2]!];
    karcherStep(c, visit);
    const moved = Math.hypot(c[0]! - before[0]!, c[1]! - before[1]!, c[2]! - before[2]!);
    if (moved < tol) break;
  }
  return [c[0]!, c[1]!, c[2]!];
}
