import type { Candidates } from './candidates.js';

/** Bounds on the free stops per zone (after locked stops): demand and stop counts. */
export interface WholeBounds {
  readonly maxDemand: Float64Array;
  readonly minDemand: Float64Array;
  readonly maxStops: Float64Array;
  readonly minStops: Float64Array;
}

interface Move {
  stop: number;
  from: number;
  to: number;
}

/** Moves tried first for a zone's breach, and second moves tried per chain. */
const FIRST_SCAN = 160;
const CHAIN_SCAN = 16;
/** Cached move lists keep their cheapest entries only: no scan reads further. */
const LIST_KEEP = FIRST_SCAN;

/**
 * The indices of the `keep` least of the first `count` costs, cheapest first, ties by index: a
 * selection (C. A. R. Hoare's FIND, expected linear time) and a sort of what is kept, instead of
 * sorting every entry. `costs` is left as it was.
 */
export function cheapestIndices(costs: Float64Array, count: number, keep: number): Int32Array {
  const byCost = (a: number, b: number): number => costs[a]! - costs[b]! || a - b;
  if (count <= keep) return Int32Array.from({ length: count }, (_, t) => t).sort(byCost);
  const copy = costs.slice(0, count);
  // The keep-th smallest cost (0-based keep - 1) by quickselect on a copy.
  let lo = 0;
  let hi = count - 1;
  const want = keep - 1;
  while (lo < hi) {
    const pivot = copy[(lo + hi) >>> 1]!;
    let a = lo;
    let b = hi;
    while (a <= b) {
      while (copy[a]! < pivot) a++;
      while (copy[b]! > pivot) b--;
      if (a <= b) {
        const t = copy[a]!;
        copy[a] = copy[b]!;
        copy[b] = t;
        a++;
        b--;
      }
    }
    if (want <= b) hi = b;
    else if (want >= a) lo = a;
    else break;
  }
  const limit = copy[want]!;
  const kept = new Int32Array(keep);
  let filled = 0;
  for (let t = 0; t < count; t++) if (costs[t]! < limit) kept[filled++] = t;
  for (let t = 0; t < count && filled < keep; t++) if (costs[t] === limit) kept[filled++] = t;
  return kept.subarray(0, filled).sort(byCost);
}

/**
 * Whole-stop assignment under zone bounds: repair of the bounds that rounding broke, and local
 * improvement. Repair moves single stops or chains of two (a stop into a zone that is full, and
 * another stop out of that zone into one with room), each time the move that fixes the most
 * breach per unit of added cost; improvement takes single moves that lower the objective
 * without breaking any bound. A heuristic: the gap to the LP bound says how good.
 */
export class WholeStops {
  readonly loadD: Float64Array;
  readonly loadS: Float64Array;
  private readonly members: Set<number>[];
  private readonly tolD: number;

  constructor(
    private readonly demand: Float64Array,
    private readonly cand: Candidates,
    private readonly angle2: (i: number, j: number) => number,
    private readonly free: readonly number[],
    private readonly bounds: WholeBounds,
    readonly assignment: Int32Array,
    /** Optional extra cost of a move (a rebalance's move cost), in the units of demand x angle^2. */
    private readonly extraCost: ((i: number, from: number, to: number) => number) | null = null,
  ) {
    const k = bounds.maxDemand.length;
    this.loadD = new Float64Array(k);
    this.loadS = new Float64Array(k);
    this.members = Array.from({ length: k }, () => new Set<number>());
    this.ownAngle = new Float64Array(assignment.length).fill(Number.NaN);
    let total = 0;
    for (const i of free) {
      const a = assignment[i]!;
      this.loadD[a]! += demand[i]!;
      this.loadS[a]!++;
      this.members[a]!.add(i);
      total += demand[i]!;
    }
    this.tolD = 1e-9 * Math.max(1e-300, total / k);
  }

  private apply(i: number, to: number): void {
    const from = this.assignment[i]!;
    this.members[from]!.delete(i);
    this.members[to]!.add(i);
    this.ownAngle[i] = Number.NaN;
    this.loadD[from]! -= this.demand[i]!;
    this.loadS[from]!--;
    this.loadD[to]! += this.demand[i]!;
    this.loadS[to]!++;
    this.assignment[i] = to;
  }

  /** Breach of zone j's bounds with its demand and stop count changed by dd and ds (0 = within). */
  private breach(j: number, dd: number, ds: number): number {
    const b = this.bounds;
    const d = this.loadD[j]! + dd;
    const s = this.loadS[j]! + ds;
    return (
      Math.max(0, d - b.maxDemand[j]! - this.tolD) +
      Math.max(0, b.minDemand[j]! - d - this.tolD) +
      Math.max(0, s - b.maxStops[j]!) * this.meanDemand() +
      Math.max(0, b.minStops[j]! - s) * this.meanDemand()
    );
  }

  private mean = -1;
  private meanDemand(): number {
    if (this.mean < 0) {
      let t = 0;
      for (const i of this.free) t += this.demand[i]!;
      this.mean = this.free.length > 0 && t > 0 ? t / this.free.length : 1;
    }
    return this.mean;
  }

  /** Total breach over all zones. */
  totalBreach(): number {
    let t = 0;
    for (let j = 0; j < this.loadD.length; j++) t += this.breach(j, 0, 0);
    return t;
  }

  private cost(i: number, to: number): number {
    const from = this.assignment[i]!;
    const d = this.demand[i]! * (this.angle2(i, to) - this.angle2(i, from));
    return this.extraCost ? d + this.extraCost(i, from, to) : d;
  }

  /**
   * cost() of moving stop i from zone `from` (angle^2 `own` to it) to the zone of its candidate
   * slot s: the listed angle read from the lists (the `angle2` given must return it for a listed
   * zone, as the flow's does).
   */
  private slotCost(i: number, from: number, s: number, own: number): number {
    const C = this.cand.c;
    const d = this.demand[i]! * (this.cand.angle2[i * C + s]! - own);
    return this.extraCost ? d + this.extraCost(i, from, this.cand.zone[i * C + s]!) : d;
  }

  /** True when stop i's slot s repeats a zone of an earlier slot (marks made when first asked for). */
  private listedBefore(i: number, s: number): boolean {
    const C = this.cand.c;
    if (!this.repeatMarks) {
      const { zone } = this.cand;
      const marks = (this.repeatMarks ??= new Uint8Array(zone.length));
      marks.fill(0);
      for (const m of this.free) {
        for (let u = 1; u < C; u++) {
          for (let t = 0; t < u; t++) {
            if (zone[m * C + t] === zone[m * C + u]) {
              marks[m * C + u] = 1;
              break;
            }
          }
        }
      }
    }
    return this.repeatMarks[i * C + s] === 1;
  }
  private repeatMarks: Uint8Array | null = null;

  /** Squared angle of stop i to its own zone, kept until it moves (NaN: not known). */
  private readonly ownAngle: Float64Array;
  private own(i: number): number {
    let a = this.ownAngle[i]!;
    if (a !== a) {
      a = this.angle2(i, this.assignment[i]!);
      this.ownAngle[i] = a;
    }
    return a;
  }

  /** Each zone's breach at the loads as they are, in a scratch array (for the scans, where the loads do not change). */
  private breachNow = new Float64Array(0);
  private breaches(): Float64Array {
    const k = this.loadD.length;
    if (this.breachNow.length !== k) this.breachNow = new Float64Array(k);
    for (let j = 0; j < k; j++) this.breachNow[j] = this.breach(j, 0, 0);
    return this.breachNow;
  }

  /** Scratch arrays of at least `size` entries for the move scans (kept for the next). */
  private sStop = new Int32Array(0);
  private sZone = new Int32Array(0);
  private sCost = new Float64Array(0);
  private scratch(size: number): { sStop: Int32Array; sZone: Int32Array; sCost: Float64Array } {
    if (this.sStop.length < size) {
      const grown = Math.max(size, 2 * this.sStop.length);
      this.sStop = new Int32Array(grown);
      this.sZone = new Int32Array(grown);
      this.sCost = new Float64Array(grown);
    }
    return { sStop: this.sStop, sZone: this.sZone, sCost: this.sCost };
  }

  private readonly tz = new Int32Array(8);
  private readonly tdd = new Float64Array(8);
  private readonly tds = new Float64Array(8);

  /** Change in total breach if the moves (at most 4, of distinct stops) were made. */
  private breachChange(moves: readonly Move[]): number {
    const { tz, tdd, tds } = this;
    let used = 0;
    const touch = (j: number, dd: number, ds: number): void => {
      for (let t = 0; t < used; t++) {
        if (tz[t] === j) {
          tdd[t]! += dd;
          tds[t]! += ds;
          return;
        }
      }
      tz[used] = j;
      tdd[used] = dd;
      tds[used] = ds;
      used++;
    };
    for (const m of moves) {
      const w = this.demand[m.stop]!;
      touch(m.from, -w, -1);
      touch(m.to, w, 1);
    }
    let change = 0;
    for (let t = 0; t < used; t++) change += this.breach(tz[t]!, tdd[t]!, tds[t]!) - this.breach(tz[t]!, 0, 0);
    return change;
  }

  /** breachChange of one stop of demand w moved from zone `from` to another zone `to`, without a list. */
  private moveBreachChange(from: number, to: number, w: number): number {
    return (this.breach(from, -w, -1) - this.breach(from, 0, 0)) + (this.breach(to, w, 1) - this.breach(to, 0, 0));
  }

  /** Candidate single moves of stop i (to its candidate zones). */
  private targets(i: number): number[] {
    const C = this.cand.c;
    const from = this.assignment[i]!;
    const out: number[] = [];
    for (let s = 0; s < C; s++) {
      const to = this.cand.zone[i * C + s]!;
      if (to !== from && !out.includes(to)) out.push(to);
    }
    return out;
  }

  /**
   * Repairs broken bounds: repeatedly takes the zone with the largest breach and the single move
   * or two-move chain touching it that lowers the total breach most per unit of added cost.
   * Returns the number of moves made.
   */
  repair(maxMoves: number): number {
    const k = this.loadD.length;
    let made = 0;
    // Everything made from the candidate lists is made again when they changed since (a later
    // flow on the same lists adopted zones): the move caches, the index by listed zone, the marks
    // of repeated slots. Only the repair reads them, and the lists change only between repairs.
    if (this.listEdits !== (this.cand.edits ?? 0)) {
      this.listEdits = this.cand.edits ?? 0;
      this.outCache.clear();
      this.inCache.clear();
      this.neighbourCache.clear();
      this.reverseStart = null;
      this.repeatMarks = null;
    }
    const hopeless = new Set<number>();
    while (made < maxMoves) {
      let worst = -1;
      let worstBreach = 0;
      for (let j = 0; j < k; j++) {
        if (hopeless.has(j)) continue;
        const b = this.breach(j, 0, 0);
        if (b > worstBreach) {
          worstBreach = b;
          worst = j;
        }
      }
      if (worst < 0) break;
      const best = this.bestFix(worst);
      if (!best) {
        hopeless.add(worst);
        continue;
      }
      const touched = new Set<number>();
      for (const m of best as Move[]) {
        touched.add(m.from);
        touched.add(m.to);
        this.apply(m.stop, m.to);
      }
      made += (best as Move[]).length;
      hopeless.clear();
      this.forget(touched);
    }
    return made;
  }

  /**
   * Drops the cached move lists that the moves just made can have changed: those of the zones
   * that gained or lost a stop, and those of zones next to one (their moves' feasibility depends
   * on the loads there).
   */
  private forget(touched: Set<number>): void {
    for (const t of touched) {
      this.outCache.delete(t);
      this.inCache.delete(t);
    }
    for (const l of [...this.outCache.keys(), ...this.inCache.keys()]) {
      const near = this.neighbourCache.get(l);
      if (!near || near.some((r) => touched.has(r))) {
        this.outCache.delete(l);
        this.inCache.delete(l);
      }
    }
    for (const t of touched) this.neighbourCache.delete(t);
  }

  private listEdits = 0;

  /** Each stop of zone l with its cheapest move out (to another candidate zone), cheapest first. */
  private outCache = new Map<number, { stop: number; to: number; cost: number }[]>();
  private movesOut(l: number): { stop: number; to: number; cost: number }[] {
    let list = this.outCache.get(l);
    if (!list) {
      const C = this.cand.c;
      const { zone } = this.cand;
      const members = this.members[l]!;
      const { sStop, sZone, sCost } = this.scratch(members.size);
      let count = 0;
      const now = this.breaches();
      for (const m of members) {
        let bestTo = -1;
        let bestCost = Infinity;
        const own = this.own(m);
        for (let s = 0; s < C; s++) {
          const r = zone[m * C + s]!;
          if (r === l || this.listedBefore(m, s)) continue;
          const c = this.slotCost(m, l, s, own);
          if (c < bestCost && this.breach(r, this.demand[m]!, 1) <= now[r]!) {
            bestCost = c;
            bestTo = r;
          }
        }
        if (bestTo >= 0) {
          sStop[count] = m;
          sZone[count] = bestTo;
          sCost[count++] = bestCost;
        }
      }
      list = Array.from(cheapestIndices(sCost, count, LIST_KEEP), (t) => ({ stop: sStop[t]!, to: sZone[t]!, cost: sCost[t]! }));
      this.outCache.set(l, list);
    }
    return list;
  }

  /**
   * Per zone, the free stops that list it among their candidates (made when first asked for):
   * the stops that could move into it, without reading the members of every neighbouring zone.
   * Candidate lists can change later (a later flow on the same lists adopts zones): repair()
   * drops the index then, and users still check the slot.
   */
  private reverseStart: Int32Array | null = null;
  private reverseStops = new Int32Array(0);
  private reverseSlots = new Int32Array(0);
  private reverse(): { start: Int32Array; stops: Int32Array; slots: Int32Array } {
    if (!this.reverseStart) {
      const k = this.loadD.length;
      const C = this.cand.c;
      const { zone } = this.cand;
      const start = new Int32Array(k + 1);
      for (const i of this.free) for (let s = 0; s < C; s++) if (!this.listedBefore(i, s)) start[zone[i * C + s]! + 1]!++;
      for (let j = 0; j < k; j++) start[j + 1]! += start[j]!;
      const stops = new Int32Array(start[k]!);
      const slots = new Int32Array(start[k]!);
      const fill = start.slice(0, k);
      for (const i of this.free) {
        for (let s = 0; s < C; s++) {
          if (this.listedBefore(i, s)) continue;
          const t = fill[zone[i * C + s]!]!++;
          stops[t] = i;
          slots[t] = s;
        }
      }
      this.reverseStart = start;
      this.reverseStops = stops;
      this.reverseSlots = slots;
    }
    return { start: this.reverseStart, stops: this.reverseStops, slots: this.reverseSlots };
  }

  /** Marks (1) of the zones in neighboursOf(l), in a scratch array kept for the next call. */
  private nearMark: Uint8Array | null = null;
  private markNeighbours(l: number): Uint8Array {
    const mark = (this.nearMark ??= new Uint8Array(this.loadD.length));
    mark.fill(0);
    for (const r of this.neighboursOf(l)) mark[r] = 1;
    return mark;
  }

  /** Stops of other zones that have l as a candidate, with the cost of moving into l, cheapest first. */
  private inCache = new Map<number, { stop: number; from: number; cost: number }[]>();
  private movesIn(l: number): { stop: number; from: number; cost: number }[] {
    let list = this.inCache.get(l);
    if (!list) {
      // Stops in zones next to l (neighboursOf) that list l, from zones within their bounds.
      const near = this.markNeighbours(l);
      const { start, stops, slots } = this.reverse();
      const { sStop, sZone, sCost } = this.scratch(start[l + 1]! - start[l]!);
      let count = 0;
      const now = this.breaches();
      for (let t = start[l]!; t < start[l + 1]!; t++) {
        const m = stops[t]!;
        const r = this.assignment[m]!;
        if (r === l || !near[r]) continue;
        if (this.cand.zone[m * this.cand.c + slots[t]!] !== l) continue;
        if (now[r]! > 0) continue;
        if (this.breach(r, -this.demand[m]!, -1) > 0) continue;
        sStop[count] = m;
        sZone[count] = r;
        sCost[count++] = this.slotCost(m, r, slots[t]!, this.own(m));
      }
      list = Array.from(cheapestIndices(sCost, count, LIST_KEEP), (t) => ({ stop: sStop[t]!, from: sZone[t]!, cost: sCost[t]! }));
      this.inCache.set(l, list);
    }
    return list;
  }

  /** The best single move or chain of two that lowers the breach at zone j. */
  private bestFix(j: number): Move[] | null {
    const over = this.loadD[j]! > this.bounds.maxDemand[j]! + this.tolD || this.loadS[j]! > this.bounds.maxStops[j]!;
    let best: Move[] | null = null;
    let bestScore = Infinity;
    const consider = (moves: Move[]): void => {
      const gain = -this.breachChange(moves);
      if (!(gain > 1e-12)) return;
      let cost = 0;
      for (const m of moves) cost += this.cost(m.stop, m.to);
      const score = cost / gain;
      if (score < bestScore) {
        bestScore = score;
        best = moves.map((m) => ({ ...m }));
      }
    };
    if (over) {
      // The cheapest moves out of j, each to a zone with room or passed on by a chain.
      const C = this.cand.c;
      const { zone } = this.cand;
      const members = this.members[j]!;
      const { sStop, sZone, sCost } = this.scratch(members.size * C);
      let count = 0;
      for (const i of members) {
        const own = this.own(i);
        for (let s = 0; s < C; s++) {
          const l = zone[i * C + s]!;
          if (l === j || this.listedBefore(i, s)) continue;
          sStop[count] = i;
          sZone[count] = l;
          sCost[count++] = this.slotCost(i, j, s, own);
        }
      }
      // Taken out of the scratch arrays, which movesOut below uses again.
      const order = Array.from(cheapestIndices(sCost, count, FIRST_SCAN), (t) => ({ stop: sStop[t]!, to: sZone[t]! }));
      for (let u = 0; u < order.length; u++) {
        const { stop, to } = order[u]!;
        const first: Move = { stop, from: j, to };
        const w = this.demand[first.stop]!;
        const l = first.to;
        // The single move counts when it lowers the total breach, even if l then breaks a little.
        consider([first]);
        if (this.breach(l, w, 1) <= this.breach(l, 0, 0)) continue;
        // l would break a bound: it passes on one of its own stops (the cheapest that fits).
        const out = this.movesOut(l);
        for (let t = 0, seen = 0; t < out.length && seen < CHAIN_SCAN; t++) {
          const o = out[t]!;
          if (o.stop === first.stop || o.to === j) continue;
          seen++;
          consider([first, { stop: o.stop, from: l, to: o.to }]);
        }
      }
    } else {
      const incomingJ = this.movesIn(j);
      for (let u = 0; u < incomingJ.length && u < FIRST_SCAN; u++) {
        const entry = incomingJ[u]!;
        consider([{ stop: entry.stop, from: entry.from, to: j }]);
      }
      // Chains: a neighbour gives a stop and takes one from its own neighbour.
      const near = this.markNeighbours(j);
      const { start, stops, slots } = this.reverse();
      const { sStop, sZone, sCost } = this.scratch(start[j + 1]! - start[j]!);
      let count = 0;
      const now = this.breaches();
      for (let t = start[j]!; t < start[j + 1]!; t++) {
        const i = stops[t]!;
        const l = this.assignment[i]!;
        if (l === j || !near[l]) continue;
        if (this.cand.zone[i * this.cand.c + slots[t]!] !== j) continue;
        const w = this.demand[i]!;
        if (this.breach(l, -w, -1) <= now[l]!) continue;
        sStop[count] = i;
        sZone[count] = l;
        sCost[count++] = this.slotCost(i, l, slots[t]!, this.own(i));
      }
      // Taken out of the scratch arrays, which movesIn below uses again.
      const order = Array.from(cheapestIndices(sCost, count, FIRST_SCAN), (t) => ({ stop: sStop[t]!, from: sZone[t]! }));
      for (let u = 0; u < order.length; u++) {
        const { stop, from } = order[u]!;
        const first: Move = { stop, from, to: j };
        const incoming = this.movesIn(first.from);
        for (let t = 0, seen = 0; t < incoming.length && seen < CHAIN_SCAN; t++) {
          const o = incoming[t]!;
          if (o.stop === first.stop || o.from === j) continue;
          seen++;
          consider([first, { stop: o.stop, from: o.from, to: first.from }]);
        }
      }
    }
    return best;
  }

  private neighbourCache = new Map<number, number[]>();
  /** Zones that some stop of zone l has among its candidates. */
  private neighboursOf(l: number): number[] {
    let list = this.neighbourCache.get(l);
    if (!list) {
      const set = new Set<number>();
      for (const i of this.members[l]!) for (const r of this.targets(i)) set.add(r);
      list = [...set];
      this.neighbourCache.set(l, list);
    }
    return list;
  }

  /**
   * Improvement: single moves that lower the objective and keep every bound (no breach may
   * grow). Returns the moves made.
   */
  improve(passes: number): number {
    let made = 0;
    for (let pass = 0; pass < passes; pass++) {
      let round = 0;
      const C = this.cand.c;
      for (const i of this.free) {
        const from = this.assignment[i]!;
        const w = this.demand[i]!;
        let bestTo = -1;
        let bestGain = 1e-15;
        // Every listed zone (a zone listed twice is weighed twice, to the same effect).
        for (let s = 0; s < C; s++) {
          const to = this.cand.zone[i * C + s]!;
          if (to === from) continue;
          const gain = -this.cost(i, to);
          if (gain > bestGain && this.moveBreachChange(from, to, w) <= 0) {
            bestGain = gain;
            bestTo = to;
          }
        }
        if (bestTo >= 0) {
          this.apply(i, bestTo);
          round++;
        }
      }
      made += round;
      if (round === 0) break;
    }
    return made;
  }
}
