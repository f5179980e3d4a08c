import { angleFromChord } from '../geo/distance.js';

/**
 * The C nearest zone centres of every stop, exactly, with the squared central angle to each
 * (radians^2), nearest first. The capacity-limited assignment moves stops between these; a zone
 * beyond a stop's list is at least `farthest` away, which bounds what it could offer.
 */
export interface Candidates {
  readonly n: number;
  readonly k: number;
  /** Candidates per stop, min(C, K). */
  readonly c: number;
  /** Zone of candidate s of stop i at [i * c + s]. */
  readonly zone: Int32Array;
  /** Squared central angle (rad^2) to that zone's centre. */
  readonly angle2: Float64Array;
  /** Squared angle to the c-th nearest centre: a lower bound for every zone not in the list (Infinity when c = K). */
  readonly farthest: Float64Array;
  /** Count of in-place changes to the lists (the flow adopting a zone): users that index the lists rebuild when it changes. */
  edits?: number;
}

/**
 * Finds the C nearest centres of every stop. Each stop starts from a guessed zone (`guess`, e.g.
 * its zone in the last plan) and searches the other centres outwards in order of their chord
 * distance from the guess; the search stops when no remaining centre can enter the list
 * (triangle inequality: chord(x, c_j) >= D(g, j) - chord(x, c_g)). Exact for any guess; fast
 * for a good one.
 */
export function nearestCandidates(units: Float64Array, centres: Float64Array, count: number, guess?: Int32Array): Candidates {
  const n = units.length / 3;
  const k = centres.length / 3;
  const c = Math.max(1, Math.min(count, k));
  const zone = new Int32Array(n * c);
  const angle2 = new Float64Array(n * c);
  const farthest = new Float64Array(n);
  // Centre-centre chords, each centre's others sorted by them.
  const m = k - 1;
  const order = new Int32Array(k * m);
  const orderChord = new Float64Array(k * m);
  const chords = new Float64Array(k);
  const idx: number[] = [];
  for (let a = 0; a < k; a++) {
    idx.length = 0;
    for (let j = 0; j < k; j++) {
      if (j === a) continue;
      const dx = centres[3 * a]! - centres[3 * j]!;
      const dy = centres[3 * a + 1]! - centres[3 * j + 1]!;
      const dz = centres[3 * a + 2]! - centres[3 * j + 2]!;
      chords[j] = Math.sqrt(dx * dx + dy * dy + dz * dz);
      idx.push(j);
    }
    idx.sort((p, q) => chords[p]! - chords[q]! || p - q);
    for (let t = 0; t < m; t++) {
      order[a * m + t] = idx[t]!;
      orderChord[a * m + t] = chords[idx[t]!]!;
    }
  }
  const bestZone = new Int32Array(c);
  const bestChord = new Float64Array(c);
  let x = 0;
  let y = 0;
  let z = 0;
  let filled = 0;
  const consider = (j: number): void => {
    const dx = x - centres[3 * j]!;
    const dy = y - centres[3 * j + 1]!;
    const dz = z - centres[3 * j + 2]!;
    const d = Math.sqrt(dx * dx + dy * dy + dz * dz);
    if (filled === c && !(d < bestChord[c - 1]! || (d === bestChord[c - 1]! && j < bestZone[c - 1]!))) return;
    let s = filled < c ? filled++ : c - 1;
    while (s > 0 && (bestChord[s - 1]! > d || (bestChord[s - 1]! === d && bestZone[s - 1]! > j))) {
      bestChord[s] = bestChord[s - 1]!;
      bestZone[s] = bestZone[s - 1]!;
      s--;
    }
    bestChord[s] = d;
    bestZone[s] = j;
  };
  for (let i = 0; i < n; i++) {
    x = units[3 * i]!;
    y = units[3 * i + 1]!;
    z = units[3 * i + 2]!;
    filled = 0;
    const g = guess ? guess[i]! : 0;
    consider(g);
    const dx = x - centres[3 * g]!;
    const dy = y - centres[3 * g + 1]!;
    const dz = z - centres[3 * g + 2]!;
    const u = Math.sqrt(dx * dx + dy * dy + dz * dz);
    for (let t = 0; t < m; t++) {
      if (filled === c && orderChord[g * m + t]! - u > bestChord[c - 1]!) break;
      consider(order[g * m + t]!);
    }
    for (let s = 0; s < c; s++) {
      zone[i * c + s] = bestZone[s]!;
      const a = angleFromChord(bestChord[s]!);
      angle2[i * c + s] = a * a;
    }
    farthest[i] = c === k ? Infinity : angle2[i * c + c - 1]!;
  }
  return { n, k, c, zone, angle2, farthest };
}

/** Squared central angle (rad^2) between stop i and centre j, computed directly. */
export function angle2To(units: Float64Array, i: number, centres: Float64Array, j: number): number {
  const dx = units[3 * i]! - centres[3 * j]!;
  const dy = units[3 * i + 1]! - centres[3 * j + 1]!;
  const dz = units[3 * i + 2]! - centres[3 * j + 2]!;
  const a = angleFromChord(Math.sqrt(dx * dx + dy * dy + dz * dz));
  return a * a;
}

/**
 * Candidate lists with each stop's `extra` zone added where it is missing (one more slot per
 * stop; -1 in `extra` adds nothing: the slot repeats the nearest). `farthest` keeps its meaning:
 * a lower bound for every zone not listed.
 */
export function withZones(cand: Candidates, units: Float64Array, centres: Float64Array, extra: Int32Array): Candidates {
  const { n, k, c } = cand;
  if (c === k) return cand;
  const c2 = c + 1;
  const zone = new Int32Array(n * c2);
  const angle2 = new Float64Array(n * c2);
  for (let i = 0; i < n; i++) {
    for (let s = 0; s < c; s++) {
      zone[i * c2 + s] = cand.zone[i * c + s]!;
      angle2[i * c2 + s] = cand.angle2[i * c + s]!;
    }
    const e = extra[i]!;
    let listed = e < 0;
    for (let s = 0; s < c && !listed; s++) if (cand.zone[i * c + s] === e) listed = true;
    if (listed) {
      zone[i * c2 + c] = cand.zone[i * c]!;
      angle2[i * c2 + c] = cand.angle2[i * c]!;
    } else {
      zone[i * c2 + c] = e;
      angle2[i * c2 + c] = angle2To(units, i, centres, e);
    }
  }
  return { n, k, c: c2, zone, angle2, farthest: cand.farthest };
}

/**
 * Candidate lists with `extra` more zones per stop: beyond its nearest ones, the zones of least
 * value `factor[i] x angle^2 + price[j]` at the given zone prices (the prices of the last
 * assignment step, or of a coarse copy of the stops). Under tight limits a town whose demand is
 * more than its own zones can take sends stops well past their nearest centres; with only the
 * nearest listed, the flow finds those zones one stop at a time (every stop whose cheapest zone
 * at the prices lies beyond its list is moved there and the paths run again, and again). The
 * nearest stay first and `farthest` keeps its meaning (a lower bound for every zone not listed:
 * the extras are not nearer than the nearest). Where fewer zones than asked are left, the slot
 * repeats the nearest.
 */
export function withCheapest(cand: Candidates, units: Float64Array, centres: Float64Array, price: Float64Array, factor: Float64Array, extra: number): Candidates {
  const { n, k, c } = cand;
  const e = Math.min(extra, k - c);
  if (e <= 0) return cand;
  const c2 = c + e;
  const zone = new Int32Array(n * c2);
  const angle2 = new Float64Array(n * c2);
  // Zones by price, cheapest first: a zone beyond the nearest is worth at least
  // factor x farthest + its price, so the scan ends where that passes the e-th best found.
  const order = Int32Array.from({ length: k }, (_, j) => j).sort((a, b) => price[a]! - price[b]! || a - b);
  const listed = new Int32Array(k).fill(-1);
  const bestZone = new Int32Array(e);
  const bestValue = new Float64Array(e);
  for (let i = 0; i < n; i++) {
    for (let s = 0; s < c; s++) {
      zone[i * c2 + s] = cand.zone[i * c + s]!;
      angle2[i * c2 + s] = cand.angle2[i * c + s]!;
      listed[cand.zone[i * c + s]!] = i;
    }
    const f = factor[i]!;
    const floor = f * cand.farthest[i]!;
    const x = units[3 * i]!;
    const y = units[3 * i + 1]!;
    const z = units[3 * i + 2]!;
    let filled = 0;
    for (let t = 0; t < k; t++) {
      const j = order[t]!;
      const pj = price[j]!;
      if (filled === e && !(floor + pj < bestValue[e - 1]!)) break;
      if (listed[j] === i) continue;
      // The squared chord is at most the squared angle: a cheap bound before the exact value.
      const dx = x - centres[3 * j]!;
      const dy = y - centres[3 * j + 1]!;
      const dz = z - centres[3 * j + 2]!;
      if (filled === e && !(f * (dx * dx + dy * dy + dz * dz) + pj < bestValue[e - 1]!)) continue;
      const v = f * angle2To(units, i, centres, j) + pj;
      if (filled === e && !(v < bestValue[e - 1]!)) continue;
      let s = filled < e ? filled++ : e - 1;
      while (s > 0 && bestValue[s - 1]! > v) {
        bestValue[s] = bestValue[s - 1]!;
        bestZone[s] = bestZone[s - 1]!;
        s--;
      }
      bestValue[s] = v;
      bestZone[s] = j;
    }
    for (let s = 0; s < e; s++) {
      const j = s < filled ? bestZone[s]! : cand.zone[i * c]!;
      zone[i * c2 + c + s] = j;
      angle2[i * c2 + c + s] = s < filled ? angle2To(units, i, centres, j) : cand.angle2[i * c]!;
    }
  }
  return { n, k, c: c2, zone, angle2, farthest: cand.farthest };
}
