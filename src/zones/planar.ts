/** Planar helpers for rings in the local equal-area plane (km). A ring is [x0, y0, x1, y1, ...], not closed. */

/** Signed area (positive when counter-clockwise), shoelace formula. */
export function ringArea(ring: ArrayLike<number>): number {
  const n = ring.length / 2;
  let s = 0;
  for (let i = 0, j = n - 1; i < n; j = i++) s += ring[2 * j]! * ring[2 * i + 1]! - ring[2 * i]! * ring[2 * j + 1]!;
  return s / 2;
}

/** Even-odd point-in-ring test (W. R. Franklin's crossing test). */
export function inRing(x: number, y: number, ring: ArrayLike<number>): boolean {
  const n = ring.length / 2;
  let inside = false;
  for (let i = 0, j = n - 1; i < n; j = i++) {
    const xi = ring[2 * i]!;
    const yi = ring[2 * i + 1]!;
    const xj = ring[2 * j]!;
    const yj = ring[2 * j + 1]!;
    if (yi > y !== yj > y && x < ((xj - xi) * (y - yi)) / (yj - yi) + xi) inside = !inside;
  }
  return inside;
}

/**
 * The set of points within `r` of a convex polygon (its Minkowski sum with a disc), as a ring
 * with each corner rounded by arc points at most `stepRad` apart. `hull` is counter-clockwise;
 * one or two points (a degenerate hull) give a disc or a stadium.
 */
export function bufferConvex(hull: ArrayLike<number>, r: number, stepRad = Math.PI / 16): number[] {
  const n = hull.length / 2;
  const out: number[] = [];
  if (n === 1) {
    for (let a = 0; a < 2 * Math.PI - 1e-12; a += stepRad) out.push(hull[0]! + r * Math.cos(a), hull[1]! + r * Math.sin(a));
    return out;
  }
  for (let i = 0; i < n; i++) {
    const px = hull[2 * ((i + n - 1) % n)]!;
    const py = hull[2 * ((i + n - 1) % n) + 1]!;
    const cx = hull[2 * i]!;
    const cy = hull[2 * i + 1]!;
    const nx = hull[2 * ((i + 1) % n)]!;
    const ny = hull[2 * ((i + 1) % n) + 1]!;
    // Outward normals of the edges into and out of this corner (counter-clockwise: outward is right).
    const a0 = Math.atan2(-(cx - px), cy - py);
    // The turn at this corner, 0..pi on a convex counter-clockwise hull; a stadium turns by half
    // a circle at each end. A hull may keep points on a straight edge (d3-delaunay does): there
    // the turn is 0, or a hair below it, which must not become a full circle.
    let turn = Math.atan2(-(nx - cx), ny - cy) - a0;
    while (turn > Math.PI) turn -= 2 * Math.PI;
    while (turn <= -Math.PI) turn += 2 * Math.PI;
    if (n === 2) turn = Math.PI;
    if (turn < 1e-12) {
      // No turn: one offset point (emitting the arc's two ends would repeat it).
      out.push(cx + r * Math.cos(a0), cy + r * Math.sin(a0));
      continue;
    }
    const steps = Math.ceil(turn / stepRad);
    for (let s = 0; s <= steps; s++) {
      const a = a0 + (turn * s) / steps;
      out.push(cx + r * Math.cos(a), cy + r * Math.sin(a));
    }
  }
  return out;
}
