import type { Random } from '../util/random.js';
import { SolveError } from './types.js';
import { angleFromChord } from '../geo/distance.js';

/** Scratch arrays of the seeding pass, sized n; reused across restarts. */
export interface SeedScratch {
  /** Squared chord to the nearest chosen centre. */
  readonly nearestChord2: Float64Array;
  /** demand x (central angle to the nearest chosen centre)^2: the k-means++ sampling weight. */
  readonly potential: Float64Array;
  /** Index of the nearest chosen centre: the exact first assignment, for free. */
  readonly nearest: Int32Array;
}

export function seedScratch(n: number): SeedScratch {
  return { nearestChord2: new Float64Array(n), potential: new Float64Array(n), nearest: new Int32Array(n) };
}

/** The stops whose nearest chosen centre is one centre, with their total potential and radius. */
interface Group {
  members: Int32Array;
  potential: number;
  /** Largest chord from the centre to a member. */
  radius: number;
}

/**
 * Weighted k-means++ seeding on the sphere (D. Arthur and S. Vassilvitskii, "k-means++: the
 * advantages of careful seeding", SODA 2007): the first centre is drawn with probability
 * proportional to demand, each next one with probability proportional to
 * demand x (great-circle angle to the nearest chosen centre)^2. When no demand-carrying stop is
 * left away from the chosen centres, the farthest stop of any demand is taken, so that every zone
 * starts at a distinct location.
 *
 * Exact, and fast for many zones: stops are kept in groups by nearest chosen centre; a new centre
 * can only take stops from a group whose centre is nearer to it than twice the group's radius
 * (triangle inequality), so other groups are not visited, and the draw picks a group by its total
 * potential and then a stop inside it.
 *
 * With `localTrials` > 1 (default 2 + floor(ln k), as scikit-learn's greedy k-means++ does, after
 * the suggestion in Arthur and Vassilvitskii's paper), each next centre is the best of that many
 * draws: the one that lowers the total potential most. 1 gives plain k-means++.
 *
 * With `preset` > 0 the first `preset` centres are already in `centres` (fixed depots) and the
 * draw continues from them.
 *
 * Writes centres (interleaved unit vectors, 3k) and fills `scratch.nearest` with each stop's
 * nearest centre and `scratch.nearestChord2` with the squared chord to it.
 */
export function seedCentres(
  units: Float64Array,
  demand: Float64Array,
  k: number,
  rng: Random,
  centres: Float64Array,
  scratch: SeedScratch,
  localTrials?: number,
  preset = 0,
): void {
  const n = demand.length;
  const { nearestChord2, potential, nearest } = scratch;
  const groups: Group[] = [];
  if (preset > 0) {
    // Centres 0..preset-1 are given (fixed depots): every stop starts in its nearest one's group.
    const lists: number[][] = Array.from({ length: preset }, () => []);
    for (let i = 0; i < n; i++) {
      let best = 0;
      let bestD2 = Infinity;
      for (let j = 0; j < preset; j++) {
        const d2 = chord2At(units, i, centres[3 * j]!, centres[3 * j + 1]!, centres[3 * j + 2]!);
        if (d2 < bestD2) {
          bestD2 = d2;
          best = j;
        }
      }
      nearestChord2[i] = bestD2;
      nearest[i] = best;
      const a = angleFromChord(Math.sqrt(bestD2));
      potential[i] = demand[i]! * a * a;
      lists[best]!.push(i);
    }
    for (const list of lists) {
      const g: Group = { members: Int32Array.from(list), potential: 0, radius: 0 };
      refreshGroup(g, potential, nearestChord2);
      groups.push(g);
    }
  } else {
    // First centre: drawn by demand alone.
    let totalDemand = 0;
    for (let i = 0; i < n; i++) totalDemand += demand[i]!;
    let first = drawIn(demand, null, n, totalDemand, rng);
    if (first < 0) first = 0;
    setCentre(centres, 0, units, first);
    const all = new Int32Array(n);
    for (let i = 0; i < n; i++) all[i] = i;
    {
      const g: Group = { members: all, potential: 0, radius: 0 };
      const px = centres[0]!;
      const py = centres[1]!;
      const pz = centres[2]!;
      for (let i = 0; i < n; i++) {
        const d2 = chord2At(units, i, px, py, pz);
        nearestChord2[i] = d2;
        nearest[i] = 0;
        const a = angleFromChord(Math.sqrt(d2));
        potential[i] = demand[i]! * a * a;
      }
      refreshGroup(g, potential, nearestChord2);
      groups.push(g);
    }
  }

  const moved = new Int32Array(n);
  const trials = localTrials ?? 2 + Math.floor(Math.log(k));
  for (let j = Math.max(1, preset); j < k; j++) {
    // Greedy k-means++: draw `trials` candidates, keep the one that lowers the potential most.
    let pick = -1;
    let bestGain = -1;
    for (let t = 0; t < trials; t++) {
      const candidate = drawPoint(groups, potential, nearestChord2, rng);
      if (candidate < 0) break;
      if (trials === 1) {
        pick = candidate;
        break;
      }
      const gain = potentialGain(groups, centres, units, demand, potential, nearestChord2, candidate);
      if (gain > bestGain) {
        bestGain = gain;
        pick = candidate;
      }
    }
    // The caller checked that there are k distinct positions; stops closer together than about
    // 1e-154 of the Earth's radius still look like one place here (their squared chord is 0).
    if (pick < 0) throw new SolveError(`${k} zones asked for, but the stops sit at only ${j} locations that can be told apart: ask for at most ${j} zone${j === 1 ? '' : 's'}`, 'too-few-locations');
    setCentre(centres, j, units, pick);
    const px = centres[3 * j]!;
    const py = centres[3 * j + 1]!;
    const pz = centres[3 * j + 2]!;
    let movedCount = 0;
    for (let g = 0; g < groups.length; g++) {
      const group = groups[g]!;
      const D = Math.sqrt(chord2(centres, g, px, py, pz));
      if (D >= 2 * group.radius) continue;
      const members = group.members;
      let keep = 0;
      let changed = false;
      for (let t = 0; t < members.length; t++) {
        const i = members[t]!;
        const d2 = chord2At(units, i, px, py, pz);
        if (d2 < nearestChord2[i]!) {
          nearestChord2[i] = d2;
          nearest[i] = j;
          const a = angleFromChord(Math.sqrt(d2));
          potential[i] = demand[i]! * a * a;
          moved[movedCount++] = i;
          changed = true;
        } else {
          members[keep++] = i;
        }
      }
      if (changed) {
        group.members = members.slice(0, keep);
        refreshGroup(group, potential, nearestChord2);
      }
    }
    const g: Group = { members: moved.slice(0, movedCount), potential: 0, radius: 0 };
    refreshGroup(g, potential, nearestChord2);
    groups.push(g);
  }
}

/** How much the total potential would fall if the stop `candidate` became a centre. */
function potentialGain(
  groups: readonly Group[],
  centres: Float64Array,
  units: Float64Array,
  demand: Float64Array,
  potential: Float64Array,
  nearestChord2: Float64Array,
  candidate: number,
): number {
  const px = units[3 * candidate]!;
  const py = units[3 * candidate + 1]!;
  const pz = units[3 * candidate + 2]!;
  let gain = 0;
  for (let g = 0; g < groups.length; g++) {
    const group = groups[g]!;
    if (Math.sqrt(chord2(centres, g, px, py, pz)) >= 2 * group.radius) continue;
    const members = group.members;
    for (let t = 0; t < members.length; t++) {
      const i = members[t]!;
      const d2 = chord2At(units, i, px, py, pz);
      if (d2 < nearestChord2[i]!) {
        const a = angleFromChord(Math.sqrt(d2));
        gain += potential[i]! - demand[i]! * a * a;
      }
    }
  }
  return gain;
}

function setCentre(centres: Float64Array, j: number, units: Float64Array, i: number): void {
  centres[3 * j] = units[3 * i]!;
  centres[3 * j + 1] = units[3 * i + 1]!;
  centres[3 * j + 2] = units[3 * i + 2]!;
}

function chord2At(units: Float64Array, i: number, px: number, py: number, pz: number): number {
  const dx = units[3 * i]! - px;
  const dy = units[3 * i + 1]! - py;
  const dz = units[3 * i + 2]! - pz;
  return dx * dx + dy * dy + dz * dz;
}

function chord2(centres: Float64Array, g: number, px: number, py: number, pz: number): number {
  return chord2At(centres, g, px, py, pz);
}

function refreshGroup(g: Group, potential: Float64Array, nearestChord2: Float64Array): void {
  let p = 0;
  let r2 = 0;
  for (let t = 0; t < g.members.length; t++) {
    const i = g.members[t]!;
    p += potential[i]!;
    if (nearestChord2[i]! > r2) r2 = nearestChord2[i]!;
  }
  g.potential = p;
  g.radius = Math.sqrt(r2);
}

/**
 * Draws an index with probability weight / total among `members` (or 0..count-1 when null).
 * Returns -1 when no weight is positive; rounding past the end returns the last positive one.
 */
function drawIn(weights: Float64Array, members: Int32Array | null, count: number, total: number, rng: Random): number {
  if (!(total > 0)) return -1;
  const target = rng.next() * total;
  let acc = 0;
  let lastPositive = -1;
  for (let t = 0; t < count; t++) {
    const i = members ? members[t]! : t;
    const w = weights[i]!;
    if (w > 0) {
      acc += w;
      lastPositive = i;
      if (acc > target) return i;
    }
  }
  return lastPositive;
}

/** Draws the next centre's stop: a group by its potential, then a stop in it; else the farthest stop. */
function drawPoint(groups: Group[], potential: Float64Array, nearestChord2: Float64Array, rng: Random): number {
  let total = 0;
  for (const g of groups) total += g.potential;
  if (total > 0) {
    const target = rng.next() * total;
    let acc = 0;
    let chosen = -1;
    for (let g = 0; g < groups.length; g++) {
      const p = groups[g]!.potential;
      if (p > 0) {
        chosen = g;
        acc += p;
        if (acc > target) break;
      }
    }
    const group = groups[chosen]!;
    const pick = drawIn(potential, group.members, group.members.length, group.potential, rng);
    if (pick >= 0) return pick;
  }
  // No demand left away from the centres: the farthest stop of any demand, lowest index on ties.
  let best = -1;
  let bestChord2 = 0;
  for (const g of groups) {
    if (!(g.radius > 0)) continue;
    for (let t = 0; t < g.members.length; t++) {
      const i = g.members[t]!;
      const d2 = nearestChord2[i]!;
      if (d2 > bestChord2 || (d2 === bestChord2 && d2 > 0 && i < best)) {
        bestChord2 = d2;
        best = i;
      }
    }
  }
  return best;
}
