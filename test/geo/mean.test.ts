import { describe, expect, it } from 'vitest';
import { karcherMean, karcherStep, sphericalMean } from '../../src/geo/mean.js';
import { angleBetween } from '../../src/geo/distance.js';
import { lonLatFromVector, unitFromLonLat, type Unit3 } from '../../src/geo/unit.js';

function unitsOf(points: readonly (readonly [number, number])[]): Float64Array {
  const out = new Float64Array(3 * points.length);
  points.forEach(([lon, lat], i) => out.set(unitFromLonLat(lon, lat), 3 * i));
  return out;
}

/** Weighted sum of squared central angles (rad^2) from c to the points. */
function arcObjective(units: Float64Array, weights: readonly number[], c: readonly number[]): number {
  let f = 0;
  for (let i = 0; i < weights.length; i++) {
    const t = angleBetween(c[0]!, c[1]!, c[2]!, units[3 * i]!, units[3 * i + 1]!, units[3 * i + 2]!);
    f += weights[i]! * t * t;
  }
  return f;
}

/** Weighted sum of squared chords from c to the points. */
function chordObjective(units: Float64Array, weights: readonly number[], c: readonly number[]): number {
  let f = 0;
  for (let i = 0; i < weights.length; i++) {
    const dx = units[3 * i]! - c[0]!;
    const dy = units[3 * i + 1]! - c[1]!;
    const dz = units[3 * i + 2]! - c[2]!;
    f += weights[i]! * (dx * dx + dy * dy + dz * dz);
  }
  return f;
}

/**
 * Brute-force minimiser of f over the sphere: a 0.5 degree grid over a lon/lat window, then a
 * compass search in a local tangent frame with the step halved down to 1e-11 rad. Independent
 * of the gradient steps under test.
 */
function bruteMinimise(f: (c: number[]) => number, lonRange: [number, number], latRange: [number, number]): number[] {
  let best = unitFromLonLat(lonRange[0], latRange[0]) as number[];
  let fb = f(best);
  for (let lon = lonRange[0]; lon <= lonRange[1]; lon += 0.5) {
    for (let lat = latRange[0]; lat <= latRange[1]; lat += 0.5) {
      const c = unitFromLonLat(lon, lat) as number[];
      const v = f(c);
      if (v < fb) {
        fb = v;
        best = c;
      }
    }
  }
  for (let step = 0.01; step > 1e-11; ) {
    const [lon, lat] = lonLatFromVector(best[0]!, best[1]!, best[2]!);
    const e = [-Math.sin((lon * Math.PI) / 180), Math.cos((lon * Math.PI) / 180), 0];
    const n = [-Math.sin((lat * Math.PI) / 180) * Math.cos((lon * Math.PI) / 180), -Math.sin((lat * Math.PI) / 180) * Math.sin((lon * Math.PI) / 180), Math.cos((lat * Math.PI) / 180)];
    let improved = false;
    for (const [a, b] of [[1, 0], [-1, 0], [0, 1], [0, -1], [1, 1], [-1, -1], [1, -1], [-1, 1]] as const) {
      const c = best.map((v, i) => v + step * (a * e[i]! + b * n[i]!));
      const norm = Math.hypot(c[0]!, c[1]!, c[2]!);
      const cn = c.map((v) => v / norm);
      const v = f(cn);
      if (v < fb) {
        fb = v;
        best = cn;
        improved = true;
        break;
      }
    }
    if (!improved) step /= 2;
  }
  return best;
}

describe('sphericalMean', () => {
  it('returns null for two antipodal points of equal weight (the mean is undefined)', () => {
    expect(sphericalMean(unitsOf([[10, 20], [-170, -20]]))).toBeNull();
    expect(sphericalMean(unitsOf([[0, 90], [0, -90]]), [2, 2])).toBeNull();
    // six points, in three antipodal pairs: the vector sum is zero too
    expect(sphericalMean(unitsOf([[0, 0], [180, 0], [90, 0], [-90, 0], [0, 90], [0, -90]]))).toBeNull();
  });

  it('returns the heavier side when antipodal weights differ', () => {
    const m = sphericalMean(unitsOf([[10, 20], [-170, -20]]), [3, 1]);
    expect(m).not.toBeNull();
    const [lon, lat] = lonLatFromVector(...m!);
    expect(lon).toBeCloseTo(10, 10);
    expect(lat).toBeCloseTo(20, 10);
  });

  it('returns null with no points or no weight', () => {
    expect(sphericalMean(new Float64Array(0))).toBeNull();
    expect(sphericalMean(unitsOf([[1, 2], [3, 4]]), [0, 0])).toBeNull();
  });

  it('is the exact minimiser of the weighted squared chord: any small move raises the sum', () => {
    const pts = [[5, 40], [25, 55], [-10, 35], [12, 62], [30, 30]] as const;
    const w = [1, 4, 2, 0.5, 3];
    const u = unitsOf(pts);
    const m = sphericalMean(u, w)!;
    const f0 = chordObjective(u, w, m);
    for (const [dlon, dlat] of [[1e-4, 0], [-1e-4, 0], [0, 1e-4], [0, -1e-4]]) {
      const [lon, lat] = lonLatFromVector(...m);
      expect(chordObjective(u, w, unitFromLonLat(lon + dlon!, lat + dlat!))).toBeGreaterThan(f0);
    }
    // and the brute-force minimiser of the chord sum is the same point
    const brute = bruteMinimise((c) => chordObjective(u, w, c), [-15, 35], [25, 65]);
    expect(angleBetween(...m, brute[0]!, brute[1]!, brute[2]!)).toBeLessThan(1e-7);
  });

  it('weights count: a weight of 2 is the same as a duplicated point', () => {
    const a = sphericalMean(unitsOf([[0, 0], [40, 10]]), [1, 2])!;
    const b = sphericalMean(unitsOf([[0, 0], [40, 10], [40, 10]]))!;
    for (let i = 0; i < 3; i++) expect(a[i]).toBeCloseTo(b[i]!, 14);
  });
});

describe('karcherMean', () => {
  // A spread, lopsided set (tens of degrees), where the vector mean and the Karcher mean differ.
  const pts = [[0, 0], [40, 5], [10, 50], [-20, 30], [35, 45]] as const;
  const w = [3, 1, 2, 1, 0.5];
  const u = unitsOf(pts);

  it('matches a brute-force minimisation of the weighted squared great-circle distance', () => {
    const k = karcherMean(u, w)!;
    const brute = bruteMinimise((c) => arcObjective(u, w, c), [-30, 50], [-10, 60]);
    expect(angleBetween(...k, brute[0]!, brute[1]!, brute[2]!)).toBeLessThan(1e-7);
    expect(arcObjective(u, w, k)).toBeLessThanOrEqual(arcObjective(u, w, brute) + 1e-12);
    // The check discriminates: the vector mean is measurably elsewhere, and worse.
    const v = sphericalMean(u, w)!;
    expect(angleBetween(...v, brute[0]!, brute[1]!, brute[2]!)).toBeGreaterThan(1e-3);
    expect(arcObjective(u, w, v)).toBeGreaterThan(arcObjective(u, w, k));
  });

  it('equals the vector mean for a symmetric set (both are the centre of symmetry)', () => {
    const ring: [number, number][] = [];
    for (let a = 0; a < 360; a += 45) ring.push([a, 60]);
    const k = karcherMean(unitsOf(ring))!;
    expect(k[2]).toBeCloseTo(1, 12);
  });

  it('returns null where the vector mean is undefined', () => {
    expect(karcherMean(unitsOf([[10, 20], [-170, -20]]))).toBeNull();
  });

  it('karcherStep never raises the objective and reports it at the new centre', () => {
    const c = [...sphericalMean(u, w)!];
    const visit = (f: (x: number, y: number, z: number, w: number) => void): void => {
      for (let i = 0; i < w.length; i++) f(u[3 * i]!, u[3 * i + 1]!, u[3 * i + 2]!, w[i]!);
    };
    let before = arcObjective(u, w, c);
    for (let s = 0; s < 20; s++) {
      const reported = karcherStep(c, visit);
      const now = arcObjective(u, w, c);
      expect(Math.abs(reported - now)).toBeLessThan(1e-12);
      expect(now).toBeLessThanOrEqual(before + 1e-15);
      before = now;
    }
    const k: Unit3 = karcherMean(u, w)!;
    expect(angleBetween(c[0]!, c[1]!, c[2]!, ...k)).toBeLessThan(1e-7);
  });
});
