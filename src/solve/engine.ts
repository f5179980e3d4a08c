import { angleFromChord } from '../geo/distance.js';
import { EARTH_RADIUS_KM } from '../geo/constants.js';

const R2 = EARTH_RADIUS_KM * EARTH_RADIUS_KM;

/**
 * Iterations of centre drift that the active set is sized for: a stop leaves the set when its
 * bounds would stay decisive for this many iterations of the last iteration's drift.
 * Common practice, no source: tuned on the benchmark's clustered data.
 */
const HORIZON = 6;

/** What one assignment step did. */
export interface PassResult {
  /** Stops that changed zone. */
  moved: number;
  /** Exact stop-centre distances computed. */
  evaluations: number;
  /** Stops whose bounds were looked at (all n on a full pass, the active set otherwise). */
  visited: number;
}

/** Exact objectives of the current assignment against the current centres. */
export interface Totals {
  /** Sum of demand x (great-circle km)^2. */
  objectiveKm2: number;
  /** Sum of demand x (chord km)^2: what vector-mean centres minimise exactly. */
  chordObjectiveKm2: number;
}

/**
 * The assignment / centre-update state of spherical k-means, on typed arrays.
 *
 * Distances for pruning are chord lengths in R^3 between points of the unit sphere: a true
 * metric, monotone in great-circle distance, so the nearest centre by chord is the nearest by
 * great-circle distance and the triangle inequality holds. Every stop keeps an upper bound on
 * the chord to its own centre and a lower bound on the chord to every other centre
 * (G. Hamerly, "Making k-means even faster", SDM 2010), stored lazily against running totals
 * of centre movement so that a stop whose bounds are not looked at costs nothing.
 *
 * When the bounds cannot settle a stop, the other centres are searched outwards from its current
 * centre, in order of centre-centre distance, and the search stops as soon as no remaining
 * centre can beat the second-nearest found (the annulus idea of J. Newling and F. Fleuret,
 * "Fast k-means with accurate bounds", ICML 2016, with the exact stopping rule D(a, j) >= u + d2).
 *
 * A full pass also finds the stops whose bounds would stay decisive for several iterations of
 * the current drift; the passes that follow visit only the others (the active set), until the
 * accumulated drift could have reached the first group. The assignment is exact throughout:
 * the one a scan of every stop against every centre gives (ties to the lower zone index aside).
 */
export class ZoneEngine {
  readonly n: number;
  readonly k: number;
  readonly units: Float64Array;
  readonly demand: Float64Array;
  /** Centres in structure-of-arrays form. */
  readonly cx: Float64Array;
  readonly cy: Float64Array;
  readonly cz: Float64Array;
  readonly assignment: Int32Array;
  /** Bound values and the running totals they were taken at (see effective bounds below). */
  private readonly upper: Float64Array;
  private readonly lower: Float64Array;
  private readonly upperAt: Float64Array;
  private readonly lowerAt: Float64Array;
  /** Running total of each centre's movement (chord), and of the largest movement per update. */
  private readonly travelled: Float64Array;
  private maxTravelled = 0;
  /** Movement of each centre since the last assignment step. */
  private readonly sinceAssign: Float64Array;
  /** Per centre, the other centres sorted by chord distance, and those distances. */
  private readonly neighbours: Int32Array;
  private readonly neighbourChord: Float64Array;
  /** Half the chord to the nearest other centre. */
  private readonly half: Float64Array;
  /** Active set: the stops to visit until `maxTravelled` passes `activeUntil`. */
  private readonly active: Int32Array;
  private activeCount = 0;
  private activeUntil = -1;
  /** Zone sums of the current assignment: demand-weighted vector sums, demand, counts and plain sums. */
  readonly sumX: Float64Array;
  readonly sumY: Float64Array;
  readonly sumZ: Float64Array;
  readonly sumW: Float64Array;
  readonly count: Int32Array;
  private readonly plainX: Float64Array;
  private readonly plainY: Float64Array;
  private readonly plainZ: Float64Array;
  private readonly order: Int32Array;
  private readonly scratchChord: Float64Array;

  constructor(units: Float64Array, demand: Float64Array, k: number) {
    const n = demand.length;
    this.n = n;
    this.k = k;
    this.units = units;
    this.demand = demand;
    this.cx = new Float64Array(k);
    this.cy = new Float64Array(k);
    this.cz = new Float64Array(k);
    this.assignment = new Int32Array(n);
    this.upper = new Float64Array(n);
    this.lower = new Float64Array(n);
    this.upperAt = new Float64Array(n);
    this.lowerAt = new Float64Array(n);
    this.travelled = new Float64Array(k);
    this.sinceAssign = new Float64Array(k);
    this.neighbours = new Int32Array(k * Math.max(k - 1, 0));
    this.neighbourChord = new Float64Array(k * Math.max(k - 1, 0));
    this.half = new Float64Array(k);
    this.active = new Int32Array(n);
    this.sumX = new Float64Array(k);
    this.sumY = new Float64Array(k);
    this.sumZ = new Float64Array(k);
    this.sumW = new Float64Array(k);
    this.count = new Int32Array(k);
    this.plainX = new Float64Array(k);
    this.plainY = new Float64Array(k);
    this.plainZ = new Float64Array(k);
    this.order = new Int32Array(Math.max(k - 1, 0));
    this.scratchChord = new Float64Array(k);
  }

  /**
   * Sets the centres (interleaved unit vectors) and a starting assignment. With `chord2` (squared
   * chord of every stop to its assigned centre) the upper bounds start exact; without, unknown.
   * Zone sums are computed for the assignment.
   */
  start(centres: Float64Array, assignment: Int32Array, chord2?: Float64Array): void {
    for (let j = 0; j < this.k; j++) {
      this.cx[j] = centres[3 * j]!;
      this.cy[j] = centres[3 * j + 1]!;
      this.cz[j] = centres[3 * j + 2]!;
    }
    this.assignment.set(assignment);
    if (chord2) for (let i = 0; i < this.n; i++) this.upper[i] = Math.sqrt(chord2[i]!);
    else this.upper.fill(Infinity);
    this.lower.fill(0);
    this.upperAt.fill(0);
    this.lowerAt.fill(0);
    this.travelled.fill(0);
    this.sinceAssign.fill(0);
    this.maxTravelled = 0;
    this.activeCount = 0;
    this.activeUntil = -1;
    this.recomputeSums();
  }

  /** Centres as interleaved unit vectors. */
  centres(out = new Float64Array(3 * this.k)): Float64Array {
    for (let j = 0; j < this.k; j++) {
      out[3 * j] = this.cx[j]!;
      out[3 * j + 1] = this.cy[j]!;
      out[3 * j + 2] = this.cz[j]!;
    }
    return out;
  }

  /** Rebuilds the sorted neighbour lists and half-distances of the current centres. */
  private prepareCentres(): void {
    const k = this.k;
    const m = k - 1;
    const { cx, cy, cz, order, scratchChord } = this;
    for (let a = 0; a < k; a++) {
      let t = 0;
      for (let j = 0; j < k; j++) {
        if (j === a) continue;
        const dx = cx[a]! - cx[j]!;
        const dy = cy[a]! - cy[j]!;
        const dz = cz[a]! - cz[j]!;
        scratchChord[j] = Math.sqrt(dx * dx + dy * dy + dz * dz);
        order[t++] = j;
      }
      order.sort((p, q) => scratchChord[p]! - scratchChord[q]! || p - q);
      for (let t2 = 0; t2 < m; t2++) {
        const j = order[t2]!;
        this.neighbours[a * m + t2] = j;
        this.neighbourChord[a * m + t2] = scratchChord[j]!;
      }
      this.half[a] = m > 0 ? 0.5 * scratchChord[order[0]!]! : Infinity;
    }
  }

  /**
   * Assignment step: every stop to its nearest centre, exactly. Zone sums follow the moves.
   * Visits every stop when the drift since the last full pass could have reached a stop outside
   * the active set (or the set is most of the stops); otherwise only the active set.
   */
  assign(): PassResult {
    this.prepareCentres();
    let drift = 0;
    for (let j = 0; j < this.k; j++) if (this.sinceAssign[j]! > drift) drift = this.sinceAssign[j]!;
    this.maxTravelled += drift;
    this.sinceAssign.fill(0);
    const full = this.maxTravelled >= this.activeUntil || this.activeCount > this.n >>> 1;
    if (!full) return this.visit(this.active, this.activeCount, -1);
    // Stops stay decisive while twice the further drift is below their slack; size the set for
    // HORIZON iterations of the drift just seen.
    const reach = 2 * HORIZON * drift;
    const result = this.visit(null, this.n, reach);
    this.activeUntil = this.maxTravelled + reach / 2;
    return result;
  }

  /**
   * The Hamerly test and, where it fails, the outward search, for `count` stops (`list` or all).
   * With `reach` >= 0 (a full pass) it also rebuilds the active set: the stops whose slack is
   * within `reach`.
   */
  private visit(list: Int32Array | null, count: number, reach: number): PassResult {
    const { k, units, demand, assignment, upper, lower, upperAt, lowerAt, travelled, half, neighbours, neighbourChord, cx, cy, cz } = this;
    const { sumX, sumY, sumZ, sumW, plainX, plainY, plainZ } = this;
    const countPerZone = this.count;
    const active = this.active;
    const rebuild = reach >= 0;
    const M = this.maxTravelled;
    const m = k - 1;
    let activeCount = 0;
    let moved = 0;
    let evaluations = 0;
    for (let t = 0; t < count; t++) {
      const i = list ? list[t]! : t;
      const a = assignment[i]!;
      let u = upper[i]! + (travelled[a]! - upperAt[i]!);
      let l = lower[i]! - (M - lowerAt[i]!);
      const bound = half[a]! > l ? half[a]! : l;
      if (u > bound) {
        const x = units[3 * i]!;
        const y = units[3 * i + 1]!;
        const z = units[3 * i + 2]!;
        let dx = x - cx[a]!;
        let dy = y - cy[a]!;
        let dz = z - cz[a]!;
        u = Math.sqrt(dx * dx + dy * dy + dz * dz);
        evaluations++;
        upper[i] = u;
        upperAt[i] = travelled[a]!;
        if (u > bound) {
          // Search the other centres outwards from the current one.
          let best = a;
          let d1 = u;
          let second = -1;
          let d2 = Infinity;
          const base = a * m;
          for (let s = 0; s < m; s++) {
            if (neighbourChord[base + s]! - u >= d2) break;
            const j = neighbours[base + s]!;
            const dot = x * cx[j]! + y * cy[j]! + z * cz[j]!;
            const c2 = 2 - 2 * dot;
            const d = c2 > 0 ? Math.sqrt(c2) : 0;
            evaluations++;
            if (d < d1 || (d === d1 && j < best)) {
              second = best;
              d2 = d1;
              best = j;
              d1 = d;
            } else if (d < d2) {
              second = j;
              d2 = d;
            }
          }
          if (best !== a) {
            assignment[i] = best;
            moved++;
            dx = x - cx[best]!;
            dy = y - cy[best]!;
            dz = z - cz[best]!;
            d1 = Math.sqrt(dx * dx + dy * dy + dz * dz);
            const w = demand[i]!;
            sumX[a]! -= w * x;
            sumY[a]! -= w * y;
            sumZ[a]! -= w * z;
            sumW[a]! -= w;
            countPerZone[a]!--;
            plainX[a]! -= x;
            plainY[a]! -= y;
            plainZ[a]! -= z;
            sumX[best]! += w * x;
            sumY[best]! += w * y;
            sumZ[best]! += w * z;
            sumW[best]! += w;
            countPerZone[best]!++;
            plainX[best]! += x;
            plainY[best]! += y;
            plainZ[best]! += z;
          }
          if (second >= 0 && second !== a) {
            dx = x - cx[second]!;
            dy = y - cy[second]!;
            dz = z - cz[second]!;
            d2 = Math.sqrt(dx * dx + dy * dy + dz * dz);
          }
          u = d1;
          // Chords from 2 - 2 dot carry an absolute error near 1e-16 / d; keep the bound safe.
          l = d2 - 1e-12;
          upper[i] = u;
          upperAt[i] = travelled[best]!;
          lower[i] = l;
          lowerAt[i] = M;
                    if (rebuild) {
            const slack = Math.max(l - u, half[best]! - u);
            if (!(slack > reach)) active[activeCount++] = i;
          }
          continue;
        }
      }
      if (rebuild) {
        // Over further drift D (sum of the largest move per step) u grows and l and half shrink
        // by at most D each: the stop stays settled while 2D <= max(l - u, half - u).
        const slack = Math.max(l - u, half[a]! - u);
        if (!(slack > reach)) active[activeCount++] = i;
      }
    }
    if (rebuild) this.activeCount = activeCount;
    return { moved, evaluations, visited: count };
  }

  /** Zone sums from scratch (clears the rounding that incremental updates collect). */
  recomputeSums(): void {
    const { n, units, demand, assignment, sumX, sumY, sumZ, sumW, count, plainX, plainY, plainZ } = this;
    sumX.fill(0);
    sumY.fill(0);
    sumZ.fill(0);
    sumW.fill(0);
    count.fill(0);
    plainX.fill(0);
    plainY.fill(0);
    plainZ.fill(0);
    for (let i = 0; i < n; i++) {
      const a = assignment[i]!;
      const w = demand[i]!;
      const x = units[3 * i]!;
      const y = units[3 * i + 1]!;
      const z = units[3 * i + 2]!;
      sumX[a]! += w * x;
      sumY[a]! += w * y;
      sumZ[a]! += w * z;
      sumW[a]! += w;
      count[a]!++;
      plainX[a]! += x;
      plainY[a]! += y;
      plainZ[a]! += z;
    }
  }

  /**
   * Sum of demand x (chord km)^2 from the zone sums alone: for unit vectors
   * sum w |x - c|^2 = sum over zones of 2 (W - c . S). O(K) per call.
   */
  chordObjectiveFromSums(): number {
    let s = 0;
    for (let j = 0; j < this.k; j++) {
      s += 2 * (this.sumW[j]! - (this.cx[j]! * this.sumX[j]! + this.cy[j]! * this.sumY[j]! + this.cz[j]! * this.sumZ[j]!));
    }
    return Math.max(0, s) * R2;
  }

  /**
   * Exact objectives of the current assignment against the current centres, one pass over the
   * stops; also re-derives the zone sums and tightens every upper bound to the exact chord.
   */
  evaluate(): Totals {
    this.recomputeSums();
    const { n, units, demand, assignment, upper, upperAt, travelled, cx, cy, cz } = this;
    let objective = 0;
    let chordObjective = 0;
    for (let i = 0; i < n; i++) {
      const a = assignment[i]!;
      const w = demand[i]!;
      const dx = units[3 * i]! - cx[a]!;
      const dy = units[3 * i + 1]! - cy[a]!;
      const dz = units[3 * i + 2]! - cz[a]!;
      const c2 = dx * dx + dy * dy + dz * dz;
      const c = Math.sqrt(c2);
      upper[i] = c;
      upperAt[i] = travelled[a]!;
      const theta = angleFromChord(c);
      objective += w * theta * theta;
      chordObjective += w * c2;
    }
    return { objectiveKm2: objective * R2, chordObjectiveKm2: chordObjective * R2 };
  }

  /**
   * Moves every centre to the normalised demand-weighted vector mean of its stops (the exact
   * minimiser of squared chord length on the sphere). A zone whose stops all have demand 0 takes
   * their plain mean; a zone whose mean vector vanishes keeps its centre. Returns the zones that
   * are empty (the caller re-seeds them).
   */
  updateCentres(): number[] {
    const empty: number[] = [];
    for (let j = 0; j < this.k; j++) {
      if (this.count[j]! <= 0) {
        empty.push(j);
        continue;
      }
      const weighted = this.sumW[j]! > 1e-300;
      const x = weighted ? this.sumX[j]! : this.plainX[j]!;
      const y = weighted ? this.sumY[j]! : this.plainY[j]!;
      const z = weighted ? this.sumZ[j]! : this.plainZ[j]!;
      const norm = Math.sqrt(x * x + y * y + z * z);
      const scale = weighted ? this.sumW[j]! : this.count[j]!;
      if (!(norm > 1e-12 * scale)) continue;
      this.moveCentre(j, x / norm, y / norm, z / norm);
    }
    return empty;
  }

  /** Moves centre j and records how far it went, for the bounds. */
  moveCentre(j: number, x: number, y: number, z: number): void {
    const dx = x - this.cx[j]!;
    const dy = y - this.cy[j]!;
    const dz = z - this.cz[j]!;
    const d2 = dx * dx + dy * dy + dz * dz;
    if (d2 === 0) return;
    // A hair more than the move, so that rounding in the bounds never makes them unsafe.
    const d = Math.sqrt(d2) * (1 + 1e-12) + 1e-15;
    this.cx[j] = x;
    this.cy[j] = y;
    this.cz[j] = z;
    this.travelled[j]! += d;
    this.sinceAssign[j]! += d;
  }

  /**
   * Re-seeds empty zones, one after another, each at the stop that contributes most to the
   * objective (demand x squared chord to the nearest centre, counting the zones re-seeded here;
   * the farthest stop when every such contribution is 0). Returns how many found a stop away
   * from every centre. The stop taken joins its new zone at once.
   */
  reseed(zones: readonly number[]): number {
    this.evaluate();
    const { n, units, demand, upper, assignment } = this;
    const placed: number[] = [];
    for (const j of zones) {
      let best = -1;
      let bestScore = 0;
      let bestPlain = -1;
      let bestChord = 0;
      for (let i = 0; i < n; i++) {
        let c = upper[i]!;
        for (const p of placed) {
          const dx = units[3 * i]! - this.cx[p]!;
          const dy = units[3 * i + 1]! - this.cy[p]!;
          const dz = units[3 * i + 2]! - this.cz[p]!;
          const d = Math.sqrt(dx * dx + dy * dy + dz * dz);
          if (d < c) c = d;
        }
        if (!(c > 1e-12)) continue;
        const score = demand[i]! * c * c;
        if (score > bestScore) {
          bestScore = score;
          best = i;
        }
        if (c > bestChord) {
          bestChord = c;
          bestPlain = i;
        }
      }
      const pick = best >= 0 ? best : bestPlain;
      if (pick < 0) break;
      this.moveCentre(j, units[3 * pick]!, units[3 * pick + 1]!, units[3 * pick + 2]!);
      assignment[pick] = j;
      this.upper[pick] = 0;
      this.upperAt[pick] = this.travelled[j]!;
      this.lower[pick] = 0;
      this.lowerAt[pick] = this.maxTravelled;
      placed.push(j);
    }
    this.recomputeSums();
    // Bounds of the other stops still hold (the moves are in `travelled`); make the next
    // assignment a full pass, as the active set knew nothing of the new centres.
    this.activeUntil = -1;
    return placed.length;
  }

  /**
   * One step towards the Karcher mean of every zone (the minimiser of demand x squared
   * great-circle distance), from the current centres, never raising a zone's sum: a Riemannian
   * gradient step with halving. Zones whose stops all have demand 0 are left. Returns the largest
   * chord a centre moved.
   */
  karcherStep(): number {
    const { n, k, units, demand, assignment, cx, cy, cz } = this;
    const gx = new Float64Array(k);
    const gy = new Float64Array(k);
    const gz = new Float64Array(k);
    const w0 = new Float64Array(k);
    const f0 = new Float64Array(k);
    for (let i = 0; i < n; i++) {
      const w = demand[i]!;
      if (w === 0) continue;
      const a = assignment[i]!;
      const x = units[3 * i]!;
      const y = units[3 * i + 1]!;
      const z = units[3 * i + 2]!;
      const dx = x - cx[a]!;
      const dy = y - cy[a]!;
      const dz = z - cz[a]!;
      const c2 = dx * dx + dy * dy + dz * dz;
      const c = Math.sqrt(c2);
      const theta = angleFromChord(c);
      // Log map: the tangent part x - (c.x) c, of length sin(theta), scaled to length theta.
      const dot = 1 - 0.5 * c2;
      const vx = x - dot * cx[a]!;
      const vy = y - dot * cy[a]!;
      const vz = z - dot * cz[a]!;
      const s = c * Math.sqrt(Math.max(0, 1 - 0.25 * c2));
      const scale = s > 1e-300 ? (w * theta) / s : w;
      gx[a]! += scale * vx;
      gy[a]! += scale * vy;
      gz[a]! += scale * vz;
      w0[a]! += w;
      f0[a]! += w * theta * theta;
    }
    // Candidate centres by the exponential map, halving the step where the sum would rise.
    const step = new Float64Array(k).fill(1);
    let pending: number[] = [];
    for (let j = 0; j < k; j++) if (w0[j]! > 0) pending.push(j);
    const nx = new Float64Array(k);
    const ny = new Float64Array(k);
    const nz = new Float64Array(k);
    const f1 = new Float64Array(k);
    let maxMove = 0;
    for (let attempt = 0; attempt < 6 && pending.length > 0; attempt++) {
      const trying = new Uint8Array(k);
      for (const j of pending) {
        const tx = (gx[j]! / w0[j]!) * step[j]!;
        const ty = (gy[j]! / w0[j]!) * step[j]!;
        const tz = (gz[j]! / w0[j]!) * step[j]!;
        const t = Math.sqrt(tx * tx + ty * ty + tz * tz);
        if (!(t > 1e-15)) continue; // at the minimum already
        const ct = Math.cos(t);
        const st = Math.sin(t) / t;
        let px = ct * cx[j]! + st * tx;
        let py = ct * cy[j]! + st * ty;
        let pz = ct * cz[j]! + st * tz;
        const norm = Math.sqrt(px * px + py * py + pz * pz);
        px /= norm;
        py /= norm;
        pz /= norm;
        nx[j] = px;
        ny[j] = py;
        nz[j] = pz;
        f1[j] = 0;
        trying[j] = 1;
      }
      for (let i = 0; i < n; i++) {
        const a = assignment[i]!;
        if (trying[a] !== 1) continue;
        const dx = units[3 * i]! - nx[a]!;
        const dy = units[3 * i + 1]! - ny[a]!;
        const dz = units[3 * i + 2]! - nz[a]!;
        const theta = angleFromChord(Math.sqrt(dx * dx + dy * dy + dz * dz));
        f1[a]! += demand[i]! * theta * theta;
      }
      const still: number[] = [];
      for (const j of pending) {
        if (trying[j] !== 1) continue;
        if (f1[j]! <= f0[j]!) {
          const dx = nx[j]! - cx[j]!;
          const dy = ny[j]! - cy[j]!;
          const dz = nz[j]! - cz[j]!;
          maxMove = Math.max(maxMove, Math.sqrt(dx * dx + dy * dy + dz * dz));
          this.moveCentre(j, nx[j]!, ny[j]!, nz[j]!);
        } else {
          step[j] = step[j]! * 0.5;
          still.push(j);
        }
      }
      pending = still;
    }
    return maxMove;
  }
}
