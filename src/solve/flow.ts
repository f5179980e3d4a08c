import { angle2To, type Candidates } from './candidates.js';

/**
 * Bounds of the flow's commodity (demand, or stops) per zone, for the free stops.
 */
export interface FlowBounds {
  readonly upper: Float64Array;
  readonly lower: Float64Array;
}

/**
 * Min-cost flow for the capacity-limited assignment, by successive shortest paths on the graph of
 * zones (R. K. Ahuja, T. L. Magnanti and J. B. Orlin, "Network Flows", Prentice Hall 1993,
 * section 9.7, with node potentials so that Dijkstra applies).
 *
 * Each free stop supplies `supply[i]` units (its demand, or 1 when the bounds count stops) that
 * must reach a zone; a unit of stop i in zone j costs  costFactor[i] x angle^2(i, j). Every zone
 * sends its units on to a sink T along an arc with bounds [lower_j, upper_j]. A stop's units are
 * held as pieces in zones (a stop is split only where the LP splits it). Collapsing the stops,
 * moving a unit of stop i from zone j to zone l is an arc j -> l of cost
 * costFactor[i] x (angle^2(i, l) - angle^2(i, j)); for each pair of zones the pieces are kept in a
 * heap by that cost, which does not depend on the potentials, so the cheapest move is at the top.
 *
 * Potentials are the zone prices: a unit of stop i goes to the zone of least
 * costFactor x angle^2 + price, and at the end the prices clear every bound (the LP's duals).
 * Stops move only between the zones of their candidate lists (the C nearest, and where the
 * caller adds them, zones of least value at start prices or the zone a stop stays in); a final
 * check against every zone moves any stop for which a zone beyond its list is cheaper (the zone
 * joins its list) and runs the paths again.
 */
export class ZoneFlow {
  readonly k: number;
  /** Potentials (prices) of the zones, relative to the sink's. */
  readonly price: Float64Array;
  /** Units in each zone, and the flow on each zone's arc to the sink. */
  readonly load: Float64Array;
  readonly out: Float64Array;
  augmentations = 0;
  moved = 0;
  /** Set when the bounds cannot all be met (nothing can carry the remaining excess). */
  blocked = false;
  /** Per zone, the largest supply of a stop that round() found split with a piece there. */
  readonly largestSplit: Float64Array;

  // Pieces: stop, zone, fraction of the stop, next piece of the same stop, version for heaps.
  private pieceStop = new Int32Array(0);
  private pieceZone = new Int32Array(0);
  private pieceX = new Float64Array(0);
  private pieceNext = new Int32Array(0);
  private pieceVersion = new Int32Array(0);
  private pieceCount = 0;
  private readonly spare: number[] = [];
  private readonly first: Int32Array;
  /** Heaps of moves j -> l: their numbers by zone pair, and per zone j its l values and heaps (in order of creation). */
  private readonly heapIndex = new PairIndex();
  private readonly heapList: MoveHeap[] = [];
  private readonly outZones: number[][];
  private readonly outHeaps: MoveHeap[][];
  /**
   * Per zone u, the arcs u -> l of the graph as the heaps' tops give them (zone, move cost,
   * piece), kept until a piece enters or leaves u: the shortest paths read them many times
   * between changes, which touch few zones.
   */
  private readonly arcZone: Int32Array[];
  private readonly arcKey: Float64Array[];
  private readonly arcPiece: Int32Array[];
  private readonly arcCount: Int32Array;
  private readonly arcsStale: Uint8Array;
  private readonly unitScale: number;
  /** Per zone: the pieces in it (with each piece's position), for the bulk phase. */
  private readonly zoneLists: Int32Array[];
  private readonly zoneSizes: Int32Array;
  private readonly reverseStart: Int32Array;
  private readonly reverse: Int32Array;
  private piecePos = new Int32Array(0);
  /** Scratch of the price steps: pieces already taken (by stamp), moves taken off the heaps. */
  private pieceMark = new Int32Array(0);
  private markStamp = 0;
  private readonly popped: number[] = [];
  private readonly poppedKeys: number[] = [];
  private readonly mergeQueue = new NodeHeap();
  private readonly byPrice: Int32Array;
  private byPriceStale = true;

  constructor(
    private readonly units: Float64Array,
    private readonly centres: Float64Array,
    private readonly cand: Candidates,
    private readonly free: Int32Array,
    private readonly supply: Float64Array,
    private readonly costFactor: Float64Array,
    private bounds: FlowBounds,
    warm?: Float64Array,
    /** Optional: each stop's current zone (-1: none) and a per-unit bonus for staying there (a move cost). */
    private readonly stay: Int32Array | null = null,
    private readonly stayBonus: Float64Array | null = null,
  ) {
    const k = centres.length / 3;
    this.k = k;
    this.price = warm ? Float64Array.from(warm) : new Float64Array(k);
    for (let j = 0; j < k; j++) {
      // A price stands only on a side where a bound exists.
      if (!Number.isFinite(bounds.upper[j]!)) this.price[j] = Math.min(this.price[j]!, 0);
      if (!(bounds.lower[j]! > 0)) this.price[j] = Math.max(this.price[j]!, 0);
    }
    this.load = new Float64Array(k);
    this.out = new Float64Array(k);
    this.largestSplit = new Float64Array(k);
    this.byPrice = new Int32Array(k);
    this.first = new Int32Array(supply.length).fill(-1);
    this.outZones = Array.from({ length: k }, () => [] as number[]);
    this.outHeaps = Array.from({ length: k }, () => [] as MoveHeap[]);
    this.arcZone = Array.from({ length: k }, () => new Int32Array(8));
    this.arcKey = Array.from({ length: k }, () => new Float64Array(8));
    this.arcPiece = Array.from({ length: k }, () => new Int32Array(8));
    this.arcCount = new Int32Array(k);
    this.arcsStale = new Uint8Array(k).fill(1);
    let total = 0;
    for (let t = 0; t < free.length; t++) total += supply[free[t]!]!;
    this.unitScale = Math.max(1e-300, total / Math.max(1, free.length));
    this.zoneLists = Array.from({ length: k }, () => new Int32Array(16));
    this.zoneSizes = new Int32Array(k);
    this.grow(free.length + 64);
    for (let t = 0; t < free.length; t++) {
      const i = free[t]!;
      this.newPiece(i, this.bestZone(i), 1);
    }
    // Reverse candidate lists: the free stops that have zone j among their candidates.
    const C = cand.c;
    const start = new Int32Array(k + 1);
    for (let t = 0; t < free.length; t++) for (let s = 0; s < C; s++) start[cand.zone[free[t]! * C + s]! + 1]!++;
    for (let j = 0; j < k; j++) start[j + 1]! += start[j]!;
    const reverse = new Int32Array(start[k]!);
    const fill = start.slice(0, k);
    for (let t = 0; t < free.length; t++) {
      const i = free[t]!;
      for (let s = 0; s < C; s++) reverse[fill[cand.zone[i * C + s]!]!++] = i;
    }
    this.reverseStart = start;
    this.reverse = reverse;
  }

  private listAdd(j: number, piece: number): void {
    let list = this.zoneLists[j]!;
    const size = this.zoneSizes[j]!;
    if (size === list.length) {
      const grown = new Int32Array(list.length * 2);
      grown.set(list);
      this.zoneLists[j] = grown;
      list = grown;
    }
    list[size] = piece;
    this.piecePos[piece] = size;
    this.zoneSizes[j] = size + 1;
  }

  private listRemove(j: number, piece: number): void {
    const list = this.zoneLists[j]!;
    const at = this.piecePos[piece]!;
    const last = this.zoneSizes[j]! - 1;
    const other = list[last]!;
    list[at] = other;
    this.piecePos[other] = at;
    this.zoneSizes[j] = last;
  }

  // ----- pieces -----

  private grow(capacity: number): void {
    const i32 = (a: Int32Array): Int32Array<ArrayBuffer> => {
      const b = new Int32Array(capacity);
      b.set(a);
      return b;
    };
    this.pieceStop = i32(this.pieceStop);
    this.pieceZone = i32(this.pieceZone);
    this.pieceNext = i32(this.pieceNext);
    this.pieceVersion = i32(this.pieceVersion);
    this.piecePos = i32(this.piecePos);
    this.pieceMark = i32(this.pieceMark);
    const x = new Float64Array(capacity);
    x.set(this.pieceX);
    this.pieceX = x;
  }

  angle2(i: number, j: number): number {
    const C = this.cand.c;
    const base = i * C;
    for (let s = 0; s < C; s++) if (this.cand.zone[base + s] === j) return this.cand.angle2[base + s]!;
    return angle2To(this.units, i, this.centres, j);
  }

  /** Per-unit cost of stop i in zone j: costFactor x angle^2, less the bonus for staying in its zone. */
  unitCost(i: number, j: number): number {
    const c = this.costFactor[i]! * this.angle2(i, j);
    return this.stay && this.stay[i] === j ? c - this.stayBonus![i]! : c;
  }

  /** unitCost for candidate slot s of stop i. */
  private candCost(i: number, s: number): number {
    const C = this.cand.c;
    const c = this.costFactor[i]! * this.cand.angle2[i * C + s]!;
    return this.stay && this.stay[i] === this.cand.zone[i * C + s] ? c - this.stayBonus![i]! : c;
  }

  /** Per-unit value of stop i in zone j at the current prices. */
  value(i: number, j: number): number {
    return this.unitCost(i, j) + this.price[j]!;
  }

  /** Zone of least per-unit value for stop i, over all zones (candidates, then a bound check). */
  bestZone(i: number): number {
    const C = this.cand.c;
    const base = i * C;
    const f = this.costFactor[i]!;
    let bz = -1;
    let bv = Infinity;
    for (let s = 0; s < C; s++) {
      const j = this.cand.zone[base + s]!;
      const v = this.candCost(i, s) + this.price[j]!;
      if (v < bv) {
        bv = v;
        bz = j;
      }
    }
    if (this.byPriceStale) {
      // Zones by price, cheapest first, for the check beyond the candidates.
      const order = this.byPrice;
      for (let j = 0; j < this.k; j++) order[j] = j;
      order.sort((a, b) => this.price[a]! - this.price[b]!);
      this.byPriceStale = false;
    }
    // A zone beyond the candidates is at least as far as the farthest candidate, so it can only
    // be cheaper when its price is below bv - f x farthest (+ the stay bonus, which only its own
    // zone gets): the zones are scanned in order of price up to that threshold.
    const bonus = this.stay ? this.stayBonus![i]! : 0;
    const order = this.byPrice;
    const u = this.units;
    const x = u[3 * i]!;
    const y = u[3 * i + 1]!;
    const z = u[3 * i + 2]!;
    for (let t = 0; t < this.k; t++) {
      const j = order[t]!;
      const pj = this.price[j]!;
      if (!(pj < bv - f * this.cand.farthest[i]! + bonus)) break;
      // The squared chord is at most the squared angle: a cheap bound before the exact value.
      const dx = x - this.centres[3 * j]!;
      const dy = y - this.centres[3 * j + 1]!;
      const dz = z - this.centres[3 * j + 2]!;
      if (pj + f * (dx * dx + dy * dy + dz * dz) - (this.stay && this.stay[i] === j ? bonus : 0) >= bv) continue;
      const v = this.value(i, j);
      if (v < bv) {
        bv = v;
        bz = j;
      }
    }
    return bz;
  }

  private newPiece(i: number, j: number, x: number): number {
    this.load[j]! += x * this.supply[i]!;
    return this.attachPiece(i, j, x);
  }

  /** A new piece of stop i in zone j (loads are the caller's business). */
  private attachPiece(i: number, j: number, x: number): number {
    let piece = this.spare.pop();
    if (piece === undefined) {
      if (this.pieceCount === this.pieceStop.length) this.grow(this.pieceStop.length * 2);
      piece = this.pieceCount++;
    }
    this.pieceStop[piece] = i;
    this.pieceZone[piece] = j;
    this.pieceX[piece] = x;
    this.pieceNext[piece] = this.first[i]!;
    this.pieceVersion[piece]!++;
    this.first[i] = piece;
    this.listAdd(j, piece);
    this.pushMoves(piece);
    return piece;
  }

  /** Enters the moves of a piece out of its zone into the heaps (to each other candidate zone). */
  private pushMoves(piece: number): void {
    const i = this.pieceStop[piece]!;
    const j = this.pieceZone[piece]!;
    const C = this.cand.c;
    const here = this.unitCost(i, j);
    const version = this.pieceVersion[piece]!;
    this.arcsStale[j] = 1;
    for (let s = 0; s < C; s++) {
      const l = this.cand.zone[i * C + s]!;
      if (l === j) continue;
      this.heapOf(j, l).push(this.candCost(i, s) - here, piece, version);
    }
  }

  /** The heap of moves j -> l, made when there is none yet. */
  private heapOf(j: number, l: number): MoveHeap {
    const key = j * this.k + l;
    const at = this.heapIndex.get(key);
    if (at >= 0) return this.heapList[at]!;
    const heap = new MoveHeap();
    this.heapIndex.set(key, this.heapList.length);
    this.heapList.push(heap);
    this.outZones[j]!.push(l);
    this.outHeaps[j]!.push(heap);
    return heap;
  }

  private dropPiece(piece: number): void {
    const i = this.pieceStop[piece]!;
    this.arcsStale[this.pieceZone[piece]!] = 1;
    this.listRemove(this.pieceZone[piece]!, piece);
    this.pieceVersion[piece]!++;
    if (this.first[i] === piece) this.first[i] = this.pieceNext[piece]!;
    else {
      let at = this.first[i]!;
      while (this.pieceNext[at] !== piece) at = this.pieceNext[at]!;
      this.pieceNext[at] = this.pieceNext[piece]!;
    }
    this.spare.push(piece);
  }

  private pieceIn(i: number, j: number): number {
    for (let piece = this.first[i]!; piece >= 0; piece = this.pieceNext[piece]!) if (this.pieceZone[piece] === j) return piece;
    return -1;
  }

  /** Moves fraction x of a piece to zone `to` (merging with the stop's piece there, if any). */
  private transfer(piece: number, to: number, x: number): void {
    const i = this.pieceStop[piece]!;
    const from = this.pieceZone[piece]!;
    const whole = x >= this.pieceX[piece]! * (1 - 1e-12);
    const amount = whole ? this.pieceX[piece]! : x;
    const s = this.supply[i]!;
    this.load[from]! -= amount * s;
    this.load[to]! += amount * s;
    this.arcsStale[from] = 1;
    this.arcsStale[to] = 1;
    const there = this.pieceIn(i, to);
    if (whole) {
      if (there >= 0) {
        this.pieceX[there]! += amount;
        this.dropPiece(piece);
      } else {
        this.listRemove(from, piece);
        this.pieceZone[piece] = to;
        this.listAdd(to, piece);
        this.pieceVersion[piece]!++;
        this.pushMoves(piece);
      }
    } else {
      this.pieceX[piece]! -= amount;
      if (there >= 0) this.pieceX[there]! += amount;
      else this.attachPiece(i, to, amount);
    }
    this.moved++;
  }

  /** The cheapest valid move out of zone j in one of its heaps (the piece at the top, stale entries dropped), or -1. */
  private topMove(j: number, heap: MoveHeap): number {
    while (heap.size > 0) {
      const piece = heap.topPiece();
      if (this.pieceVersion[piece] === heap.topVersion() && this.pieceZone[piece] === j && this.pieceX[piece]! > 0) return piece;
      heap.pop();
    }
    return -1;
  }

  /**
   * When no path leads from the zones with excess to one with room, the zones reached are cut off
   * by the candidate lists (a town's zones whose stops all list only each other): every stop in a
   * reached zone gets the 3 nearest unreached zones as further moves. False when none is left.
   */
  private expand(reached: Uint8Array): boolean {
    const k = this.k;
    let added = false;
    for (let u = 0; u < k; u++) {
      if (!reached[u]) continue;
      const others: { zone: number; chord: number }[] = [];
      for (let l = 0; l < k; l++) {
        if (reached[l] || l === u) continue;
        const dx = this.centres[3 * u]! - this.centres[3 * l]!;
        const dy = this.centres[3 * u + 1]! - this.centres[3 * l + 1]!;
        const dz = this.centres[3 * u + 2]! - this.centres[3 * l + 2]!;
        others.push({ zone: l, chord: dx * dx + dy * dy + dz * dz });
      }
      others.sort((a, b) => a.chord - b.chord);
      const targets = others.slice(0, 3).map((o) => o.zone);
      if (targets.length === 0) continue;
      const list = this.zoneLists[u]!.subarray(0, this.zoneSizes[u]!);
      for (const l of targets) {
        const heap = this.heapOf(u, l);
        this.arcsStale[u] = 1;
        for (let t = 0; t < list.length; t++) {
          const piece = list[t]!;
          const i = this.pieceStop[piece]!;
          heap.push(this.unitCost(i, l) - this.unitCost(i, u), piece, this.pieceVersion[piece]!);
        }
        added = true;
      }
    }
    return added;
  }

  // ----- relaxation: single-zone price steps for the bulk -----

  /**
   * Moves the bulk of the excess before the exact paths, by single-zone price steps (a
   * Gauss-Seidel ascent of the dual): a zone above its upper bound raises its price exactly as
   * far as it takes for just its excess to prefer other zones (the marginal piece split); a zone
   * below its lower bound lowers its price until just its deficit comes in. Every step keeps
   * complementary slackness exact, so the shortest paths can take over at any point; this only
   * saves them work (a path moves about one stop, a step thousands). Stops after `maxSteps`,
   * or when steps no longer shrink the total excess much.
   */
  private relax(maxSteps: number): void {
    const k = this.k;
    const { upper, lower } = this.bounds;
    const tol = 1e-9 * this.unitScale * Math.max(1, this.free.length / k);
    const breach = (): number => {
      let t = 0;
      for (let j = 0; j < k; j++) t += Math.max(0, this.load[j]! - upper[j]!) + Math.max(0, lower[j]! - this.load[j]!);
      return t;
    };
    let lastCheck = breach();
    const skip = new Uint8Array(k);
    for (let step = 1; step <= maxSteps; step++) {
      let worst = -1;
      let worstAmount = tol;
      const shed = true;
      for (let j = 0; j < k; j++) {
        if (skip[j]) continue;
        const over = this.load[j]! - upper[j]!;
        const under = lower[j]! - this.load[j]!;
        if (over > worstAmount) {
          worstAmount = over;
          worst = j;
        }
        // Zones below their lower bound are left to the paths (price steps down for them made a
        // rebalance, with its stay bonus, run without end).
        void under;
      }
      if (worst < 0) return;
      if (!(shed ? this.shedStep(worst, worstAmount) : this.gatherStep(worst, worstAmount))) skip[worst] = 1;
      if (step % k === 0) {
        // Give up on steps that only trade excess back and forth.
        const now = breach();
        if (now > 0.9 * lastCheck) return;
        lastCheck = now;
        skip.fill(0);
      }
    }
  }

  /**
   * One single-zone step up (zone j sheds `need` units); false when nothing could move. A piece
   * in j leaves at the price rise that makes its cheapest other zone as good as j: the least of
   * (move cost j -> l + price of l) - price of j over its moves, which the heaps of moves out of
   * j hold in order of move cost. Merging those heaps by move cost + price of l yields j's pieces
   * in order of the rise they need, so only the pieces that leave (and the next one) are read,
   * not the whole zone.
   */
  private shedStep(j: number, need: number): boolean {
    const zones = this.outZones[j]!;
    const heaps = this.outHeaps[j]!;
    const merge = this.mergeQueue;
    merge.clear();
    const pj = this.price[j]!;
    for (let t = 0; t < heaps.length; t++) if (this.topMove(j, heaps[t]!) >= 0) merge.push(heaps[t]!.topKey() + this.price[zones[t]!]!, t);
    const mark = ++this.markStamp;
    const popped = this.popped;
    popped.length = 0;
    const pieces: number[] = [];
    const target: number[] = [];
    const amount: number[] = [];
    let total = 0;
    let change = 0;
    while (merge.size > 0 && total < need) {
      const t = merge.topNode();
      const v = merge.topKey();
      merge.pop();
      const heap = heaps[t]!;
      const piece = heap.topPiece();
      popped.push(t, piece, heap.topVersion());
      this.poppedKeys.push(heap.topKey());
      heap.pop();
      if (this.topMove(j, heap) >= 0) merge.push(heap.topKey() + this.price[zones[t]!]!, t);
      // A stop held in its zone by an unbounded stay bonus has no finite price to move at (and
      // neither has any piece after it in this order).
      if (!(v < Infinity)) break;
      if (this.pieceMark[piece] === mark) continue;
      this.pieceMark[piece] = mark;
      const a = this.pieceX[piece]! * this.supply[this.pieceStop[piece]!]!;
      pieces.push(piece);
      target.push(zones[t]!);
      amount.push(a);
      total += a;
      change = Math.max(change, v - pj);
    }
    let taken = 0;
    if (pieces.length > 0) {
      this.price[j] = pj + change;
      this.byPriceStale = true;
      for (let u = 0; u < pieces.length; u++) {
        const take = Math.min(amount[u]!, need - taken);
        if (!(take > 0)) break;
        const piece = pieces[u]!;
        this.transfer(piece, target[u]!, take / this.supply[this.pieceStop[piece]!]!);
        taken += take;
      }
    }
    // Moves taken off the heaps whose piece is still there as it was (the one moved in part, and
    // any not moved) go back.
    for (let e = 0; e < popped.length; e += 3) {
      const piece = popped[e + 1]!;
      const version = popped[e + 2]!;
      if (this.pieceVersion[piece] === version && this.pieceZone[piece] === j && this.pieceX[piece]! > 0) heaps[popped[e]!]!.push(this.poppedKeys[e / 3]!, piece, version);
    }
    this.poppedKeys.length = 0;
    this.arcsStale[j] = 1;
    return taken > 0;
  }

  /** One single-zone step down (zone j takes in `need` units); false when nothing could move. */
  private gatherStep(j: number, need: number): boolean {
    const pieces: number[] = [];
    const delta: number[] = [];
    const amount: number[] = [];
    for (let t = this.reverseStart[j]!; t < this.reverseStart[j + 1]!; t++) {
      const i = this.reverse[t]!;
      const there = this.value(i, j);
      for (let piece = this.first[i]!; piece >= 0; piece = this.pieceNext[piece]!) {
        const from = this.pieceZone[piece]!;
        if (from === j) continue;
        const d = Math.max(0, there - this.value(i, from));
        if (!Number.isFinite(d)) continue;
        pieces.push(piece);
        delta.push(d);
        amount.push(this.pieceX[piece]! * this.supply[i]!);
      }
    }
    if (pieces.length === 0) return false;
    let total = 0;
    for (const a of amount) total += a;
    const idx = Int32Array.from(pieces.keys());
    const cut = total > need ? selectByWeight(idx, delta, amount, need) : idx.length - 1;
    let change = 0;
    for (let u = 0; u <= cut; u++) change = Math.max(change, delta[idx[u]!]!);
    this.price[j] = this.price[j]! - change;
    this.byPriceStale = true;
    let taken = 0;
    for (let u = 0; u <= cut; u++) {
      const at = idx[u]!;
      const take = Math.min(amount[at]!, need - taken);
      if (!(take > 0)) break;
      const piece = pieces[at]!;
      this.transfer(piece, j, take / this.supply[this.pieceStop[piece]!]!);
      taken += take;
    }
    return taken > 0;
  }

  // ----- successive shortest paths -----

  /**
   * Runs successive shortest paths until every zone's units sit within its bounds with
   * complementary slackness, or nothing can carry the excess (`blocked`), or `maxPaths` paths.
   * Each path: Dijkstra from every node with excess over reduced costs (all >= 0) to the nearest
   * node with a deficit, potentials raised so that the path is tight, the bottleneck pushed.
   */
  run(maxPaths: number): void {
    const k = this.k;
    const T = k;
    const V = k + 1;
    const { upper, lower } = this.bounds;
    const tol = 1e-10 * this.unitScale;
    this.relax(20 * k);
    // Sink arcs: saturate those whose reduced cost is negative (complementary slackness).
    for (let j = 0; j < k; j++) {
      const p = this.price[j]!;
      if (p > 0) this.out[j] = upper[j]!;
      else if (p < 0) this.out[j] = lower[j]!;
      else this.out[j] = Math.min(upper[j]!, Math.max(lower[j]!, this.load[j]!));
    }
    let totalSupply = 0;
    for (let t = 0; t < this.free.length; t++) totalSupply += this.supply[this.free[t]!]!;
    // The sink's excess is the sum of every zone's flow less the total supply: its rounding is
    // of the order of the last digit of the total, not of one zone's. A tolerance of that order
    // keeps a last-digit excess there from being pushed to and fro without end.
    const tolAt = new Float64Array(V).fill(tol);
    tolAt[T] = tol + 1e-12 * totalSupply;
    const excess = new Float64Array(V);
    const recount = (): void => {
      let sumOut = 0;
      for (let j = 0; j < k; j++) {
        excess[j] = this.load[j]! - this.out[j]!;
        sumOut += this.out[j]!;
      }
      excess[T] = sumOut - totalSupply;
    };
    recount();
    const dist = new Float64Array(V);
    const done = new Uint8Array(V);
    const prev = new Int32Array(V);
    const prevPiece = new Int32Array(V);
    const potential = new Float64Array(V);
    const queue = new NodeHeap();
    const settled: number[] = [];
    let expansions = 0;
    for (;;) {
      let anyExcess = false;
      let anyDeficit = false;
      for (let v = 0; v < V; v++) {
        if (excess[v]! > tolAt[v]!) anyExcess = true;
        if (excess[v]! < -tolAt[v]!) anyDeficit = true;
      }
      // Excess with no deficit left anywhere is rounding in the last digits: done.
      if (!anyExcess || !anyDeficit || this.augmentations >= maxPaths) return;
      for (let j = 0; j < k; j++) potential[j] = this.price[j]!;
      potential[T] = 0;
      dist.fill(Infinity);
      done.fill(0);
      prev.fill(-1);
      queue.clear();
      settled.length = 0;
      for (let v = 0; v < V; v++) {
        if (excess[v]! > tolAt[v]!) {
          dist[v] = 0;
          queue.push(0, v);
        }
      }
      let target = -1;
      let D = 0;
      while (queue.size > 0) {
        const du = queue.topKey();
        const u = queue.topNode();
        queue.pop();
        if (done[u] || du > dist[u]!) continue;
        done[u] = 1;
        settled.push(u);
        if (excess[u]! < -tolAt[u]!) {
          target = u;
          D = du;
          break;
        }
        this.forArcs(u, potential, tol, (v, reduced, piece) => {
          if (done[v]) return;
          const nd = du + Math.max(0, reduced);
          if (nd < dist[v]!) {
            dist[v] = nd;
            prev[v] = u;
            prevPiece[v] = piece;
            queue.push(nd, v);
          }
        });
      }
      if (target < 0) {
        if (expansions < k && this.expand(done)) {
          expansions++;
          continue;
        }
        if (process.env.FLOW_DEBUG) {
          let src = 0;
          let snk = 0;
          let sa = 0;
          for (let v = 0; v < V; v++) {
            if (excess[v]! > tolAt[v]!) src++;
            if (excess[v]! < -tolAt[v]!) {
              snk++;
              sa += excess[v]!;
            }
          }
          let reached = 0;
          for (let v = 0; v < V; v++) reached += done[v]!;
          console.log('blocked: sources', src, 'sinks', snk, sa, 'reached', reached, 'expansions', expansions, 'T excess', excess[T]);
        }
        this.blocked = true;
        return;
      }
      // Potentials: every settled node rises by D - dist, so the path is tight and no reduced
      // cost turns negative.
      for (const v of settled) if (dist[v]! < D) potential[v]! += D - dist[v]!;
      for (let j = 0; j < k; j++) this.price[j] = potential[j]! - potential[T]!;
      this.byPriceStale = true;
      const nodes: number[] = [target];
      const pieces: number[] = [];
      for (let v = target; prev[v]! >= 0; v = prev[v]!) {
        nodes.unshift(prev[v]!);
        pieces.unshift(prevPiece[v]!);
      }
      this.augment({ nodes, pieces }, excess, tol);
      if (process.env.FLOW_STATS) flowStats.settled += settled.length;
      recount();
    }
  }

  /**
   * Visits the residual arcs out of node u (zones: moves to candidate zones and the arc to the
   * sink; the sink: arcs back to zones), with their reduced costs under `potential`.
   */
  private forArcs(u: number, potential: Float64Array, tol: number, f: (v: number, reduced: number, piece: number) => void): void {
    const k = this.k;
    const T = k;
    const { upper, lower } = this.bounds;
    if (u === T) {
      // T -> j: less flow on j's sink arc (possible above its lower bound).
      for (let j = 0; j < k; j++) if (this.out[j]! > lower[j]! + tol) f(j, potential[j]! - potential[T]!, -1);
      return;
    }
    // u -> T: more flow on u's sink arc (possible below its upper bound).
    if (this.out[u]! < upper[u]! - tol) f(T, potential[T]! - potential[u]!, -1);
    if (this.arcsStale[u]) this.readArcs(u);
    const zones = this.arcZone[u]!;
    const keys = this.arcKey[u]!;
    const pieces = this.arcPiece[u]!;
    const pu = potential[u]!;
    for (let t = 0, m = this.arcCount[u]!; t < m; t++) {
      const l = zones[t]!;
      f(l, keys[t]! - pu + potential[l]!, pieces[t]!);
    }
  }

  /** Reads zone u's arcs off the tops of its heaps. */
  private readArcs(u: number): void {
    const heaps = this.outHeaps[u]!;
    const zones = this.outZones[u]!;
    if (this.arcZone[u]!.length < heaps.length) {
      const size = Math.max(heaps.length, 2 * this.arcZone[u]!.length);
      this.arcZone[u] = new Int32Array(size);
      this.arcKey[u] = new Float64Array(size);
      this.arcPiece[u] = new Int32Array(size);
    }
    const az = this.arcZone[u]!;
    const ak = this.arcKey[u]!;
    const ap = this.arcPiece[u]!;
    let m = 0;
    for (let t = 0; t < heaps.length; t++) {
      const heap = heaps[t]!;
      const piece = this.topMove(u, heap);
      if (piece < 0) continue;
      az[m] = zones[t]!;
      ak[m] = heap.topKey();
      ap[m] = piece;
      m++;
    }
    this.arcCount[u] = m;
    this.arcsStale[u] = 0;
  }

  /** Pushes the bottleneck amount along a path (nodes, and the piece moved on each zone arc). */
  private augment(path: { nodes: number[]; pieces: number[] }, excess: Float64Array, tol: number): void {
    const k = this.k;
    const T = k;
    const { upper, lower } = this.bounds;
    const { nodes, pieces } = path;
    const src = nodes[0]!;
    const dst = nodes[nodes.length - 1]!;
    let delta = Math.min(excess[src]!, -excess[dst]!);
    for (let t = 0; t + 1 < nodes.length; t++) {
      const u = nodes[t]!;
      const v = nodes[t + 1]!;
      if (u === T) delta = Math.min(delta, this.out[v]! - lower[v]!);
      else if (v === T) delta = Math.min(delta, upper[u]! - this.out[u]!);
      else {
        const piece = pieces[t]!;
        delta = Math.min(delta, this.pieceX[piece]! * this.supply[this.pieceStop[piece]!]!);
      }
    }
    void tol;
    delta = Math.max(delta, 0);
    for (let t = 0; t + 1 < nodes.length; t++) {
      const u = nodes[t]!;
      const v = nodes[t + 1]!;
      if (u === T) this.out[v]! -= delta;
      else if (v === T) this.out[u]! += delta;
      else {
        const piece = pieces[t]!;
        this.transfer(piece, v, delta / this.supply[this.pieceStop[piece]!]!);
      }
    }
    this.augmentations++;
    if (process.env.FLOW_STATS) {
      flowStats.paths++;
      flowStats.amount += delta;
      flowStats.length += nodes.length - 1;
    }
  }

  /**
   * Moves every piece whose stop has a cheaper zone than its own (beyond the candidates, or after
   * rounding error). Returns how many pieces moved; run() must follow when any did.
   */
  settle(): number {
    let count = 0;
    for (let t = 0; t < this.free.length; t++) {
      const i = this.free[t]!;
      const bz = this.bestZone(i);
      const best = this.value(i, bz);
      const tol = 1e-12 * Math.max(1e-300, Math.abs(best)) + 1e-15;
      let adopted = false;
      for (let piece = this.first[i]!; piece >= 0; ) {
        const next = this.pieceNext[piece]!;
        const z = this.pieceZone[piece]!;
        if (z !== bz && this.value(i, z) > best + tol) {
          if (!adopted) this.adopt(i, bz);
          adopted = true;
          this.transfer(piece, bz, this.pieceX[piece]!);
          count++;
        }
        piece = next;
      }
    }
    return count;
  }

  /**
   * Makes zone j one of stop i's candidates when it is not: the stop's cheapest zone at the prices
   * lies beyond its list, and the paths must be able to move it there and back. It takes the slot
   * of the candidate of highest value at the prices that holds no piece of the stop (not always
   * the farthest: two far zones would then take turns in one slot and the flow would never
   * settle); `farthest` is lowered to the dropped zone's angle when that was nearer, so it stays
   * a lower bound for every zone not listed.
   */
  private adopt(i: number, j: number): void {
    const C = this.cand.c;
    const base = i * C;
    let slot = -1;
    let worst = -Infinity;
    for (let s = 0; s < C; s++) {
      const z = this.cand.zone[base + s]!;
      if (z === j) return;
      if (this.pieceIn(i, z) >= 0) continue;
      const v = this.candCost(i, s) + this.price[z]!;
      if (v > worst) {
        worst = v;
        slot = s;
      }
    }
    if (slot < 0) return;
    this.cand.farthest[i] = Math.min(this.cand.farthest[i]!, this.cand.angle2[base + slot]!);
    this.cand.zone[base + slot] = j;
    this.cand.edits = (this.cand.edits ?? 0) + 1;
    this.cand.angle2[base + slot] = angle2To(this.units, i, this.centres, j);
  }

  /**
   * New bounds for the same stops and costs, to continue from the pieces and prices as they are
   * (e.g. a rounded flow, every stop whole in a zone of least value, with its bounds tightened):
   * only what the change in bounds moves is left to carry. run() (and settle()) must follow. A
   * price on a side that no longer has a bound is dropped; settle() then moves the stops it held.
   */
  rebound(bounds: FlowBounds): void {
    this.bounds = bounds;
    this.blocked = false;
    for (let j = 0; j < this.k; j++) {
      if (!Number.isFinite(bounds.upper[j]!)) this.price[j] = Math.min(this.price[j]!, 0);
      if (!(bounds.lower[j]! > 0)) this.price[j] = Math.max(this.price[j]!, 0);
    }
    this.byPriceStale = true;
  }

  /** Calls f(stop, zone, fraction) for every piece of every free stop. */
  forEachPiece(f: (stop: number, zone: number, x: number) => void): void {
    for (let t = 0; t < this.free.length; t++) {
      const i = this.free[t]!;
      for (let piece = this.first[i]!; piece >= 0; piece = this.pieceNext[piece]!) f(i, this.pieceZone[piece]!, this.pieceX[piece]!);
    }
  }

  /** Least per-unit value of stop i over all zones. */
  leastValue(i: number): number {
    return this.value(i, this.bestZone(i));
  }

  /**
   * Rounds every split stop to one of the zones holding a piece of it (the one that breaks the
   * bounds least, then the cheapest) and writes every free stop's zone. Returns how many were split.
   */
  round(assignment: Int32Array): number {
    const { upper, lower } = this.bounds;
    const scale = this.unitScale * this.free.length / Math.max(1, this.k);
    let split = 0;
    for (let t = 0; t < this.free.length; t++) {
      const i = this.free[t]!;
      const firstPiece = this.first[i]!;
      if (this.pieceNext[firstPiece]! < 0) {
        assignment[i] = this.pieceZone[firstPiece]!;
        continue;
      }
      split++;
      for (let piece = firstPiece; piece >= 0; piece = this.pieceNext[piece]!) {
        const z = this.pieceZone[piece]!;
        this.largestSplit[z] = Math.max(this.largestSplit[z]!, this.supply[i]!);
      }
      let bestZone = -1;
      let bestBreach = Infinity;
      let bestCost = Infinity;
      for (let piece = firstPiece; piece >= 0; piece = this.pieceNext[piece]!) {
        const z = this.pieceZone[piece]!;
        // Placing the whole stop in z: z takes the rest of it, the other zones lose their pieces.
        // Each unit a bound is broken by is priced at that zone's LP price (what a unit of its
        // bound is worth), so the choice weighs cost against the repair it will need.
        let breach = 0;
        let breachCost = 0;
        const s = this.supply[i]!;
        for (let other = firstPiece; other >= 0; other = this.pieceNext[other]!) {
          const oz = this.pieceZone[other]!;
          const x = this.pieceX[other]!;
          if (oz === z) {
            const b = Math.max(0, this.load[z]! + (1 - x) * s - upper[z]!);
            breach += b;
            breachCost += b * Math.abs(this.price[z]!);
          } else {
            const b = Math.max(0, lower[oz]! - (this.load[oz]! - x * s));
            breach += b;
            breachCost += b * Math.abs(this.price[oz]!);
          }
        }
        breach /= scale;
        const cost = s * this.unitCost(i, z) + breachCost;
        if (cost < bestCost || (cost === bestCost && breach < bestBreach)) {
          bestBreach = breach;
          bestCost = cost;
          bestZone = z;
        }
      }
      for (let piece = this.first[i]!; piece >= 0; ) {
        const next = this.pieceNext[piece]!;
        if (this.pieceZone[piece] !== bestZone) this.transfer(piece, bestZone, this.pieceX[piece]!);
        piece = next;
      }
      assignment[i] = bestZone;
    }
    return split;
  }
}

/** A lazy binary min-heap of (distance, node) pairs for Dijkstra. */
class NodeHeap {
  private keys: number[] = [];
  private nodes: number[] = [];
  get size(): number {
    return this.keys.length;
  }
  clear(): void {
    this.keys.length = 0;
    this.nodes.length = 0;
  }
  push(key: number, node: number): void {
    const keys = this.keys;
    const nodes = this.nodes;
    let at = keys.length;
    keys.push(key);
    nodes.push(node);
    while (at > 0) {
      const parent = (at - 1) >> 1;
      if (keys[parent]! <= key) break;
      keys[at] = keys[parent]!;
      nodes[at] = nodes[parent]!;
      at = parent;
    }
    keys[at] = key;
    nodes[at] = node;
  }
  topKey(): number {
    return this.keys[0]!;
  }
  topNode(): number {
    return this.nodes[0]!;
  }
  pop(): void {
    const keys = this.keys;
    const nodes = this.nodes;
    const key = keys.pop()!;
    const node = nodes.pop()!;
    const size = keys.length;
    if (size === 0) return;
    let at = 0;
    for (;;) {
      let child = 2 * at + 1;
      if (child >= size) break;
      if (child + 1 < size && keys[child + 1]! < keys[child]!) child++;
      if (keys[child]! >= key) break;
      keys[at] = keys[child]!;
      nodes[at] = nodes[child]!;
      at = child;
    }
    keys[at] = key;
    nodes[at] = node;
  }
}

/** A binary min-heap of (cost, piece, version) triples in typed arrays. */
class MoveHeap {
  private keys = new Float64Array(8);
  private pieces = new Int32Array(8);
  private versions = new Int32Array(8);
  size = 0;

  push(key: number, piece: number, version: number): void {
    if (this.size === this.keys.length) {
      const n = this.keys.length * 2;
      const k2 = new Float64Array(n);
      k2.set(this.keys);
      this.keys = k2;
      const p2 = new Int32Array(n);
      p2.set(this.pieces);
      this.pieces = p2;
      const v2 = new Int32Array(n);
      v2.set(this.versions);
      this.versions = v2;
    }
    let at = this.size++;
    while (at > 0) {
      const parent = (at - 1) >> 1;
      if (this.keys[parent]! <= key) break;
      this.keys[at] = this.keys[parent]!;
      this.pieces[at] = this.pieces[parent]!;
      this.versions[at] = this.versions[parent]!;
      at = parent;
    }
    this.keys[at] = key;
    this.pieces[at] = piece;
    this.versions[at] = version;
  }

  topKey(): number {
    return this.keys[0]!;
  }

  topPiece(): number {
    return this.pieces[0]!;
  }

  topVersion(): number {
    return this.versions[0]!;
  }

  pop(): void {
    const last = --this.size;
    if (last <= 0) return;
    const key = this.keys[last]!;
    const piece = this.pieces[last]!;
    const version = this.versions[last]!;
    let at = 0;
    for (;;) {
      let child = 2 * at + 1;
      if (child >= last) break;
      if (child + 1 < last && this.keys[child + 1]! < this.keys[child]!) child++;
      if (this.keys[child]! >= key) break;
      this.keys[at] = this.keys[child]!;
      this.pieces[at] = this.pieces[child]!;
      this.versions[at] = this.versions[child]!;
      at = child;
    }
    this.keys[at] = key;
    this.pieces[at] = piece;
    this.versions[at] = version;
  }
}

/**
 * Open-addressing hash table from non-negative integer keys (below 2^53) to non-negative
 * integers, in typed arrays; -1 for a key not present.
 */
class PairIndex {
  private keys = new Float64Array(64).fill(-1);
  private values = new Int32Array(64);
  private size = 0;

  private slot(key: number): number {
    const mask = this.keys.length - 1;
    let h = (Math.imul(key >>> 0, 0x9e3779b1) ^ Math.imul(Math.floor(key / 4294967296), 0x85ebca77)) >>> 0;
    for (;;) {
      h &= mask;
      const k = this.keys[h]!;
      if (k === key || k < 0) return h;
      h++;
    }
  }

  get(key: number): number {
    const h = this.slot(key);
    return this.keys[h] === key ? this.values[h]! : -1;
  }

  set(key: number, value: number): void {
    if (2 * (this.size + 1) > this.keys.length) {
      const oldKeys = this.keys;
      const oldValues = this.values;
      this.keys = new Float64Array(2 * oldKeys.length).fill(-1);
      this.values = new Int32Array(2 * oldKeys.length);
      for (let t = 0; t < oldKeys.length; t++) {
        if (oldKeys[t]! < 0) continue;
        const h = this.slot(oldKeys[t]!);
        this.keys[h] = oldKeys[t]!;
        this.values[h] = oldValues[t]!;
      }
    }
    const h = this.slot(key);
    if (this.keys[h] !== key) {
      this.keys[h] = key;
      this.size++;
    }
    this.values[h] = value;
  }
}

export const flowStats = { paths: 0, amount: 0, length: 0, settled: 0, tiny: 0 };


/**
 * Reorders idx so that the entries with the smallest key come first, and returns the position
 * of the entry at which the running total of weight reaches target (the last one if never);
 * that entry has the largest key of idx[0..position]. Expected linear time: quickselect
 * (C. A. R. Hoare's FIND) on a weighted rank, ties by entry index.
 */
export function selectByWeight(idx: Int32Array, key: readonly number[], weight: readonly number[], target: number): number {
  const less = (a: number, b: number): boolean => key[a]! < key[b]! || (key[a] === key[b] && a < b);
  let lo = 0;
  let hi = idx.length - 1;
  let before = 0;
  while (lo < hi) {
    const mid = (lo + hi) >>> 1;
    const a = idx[lo]!;
    const b = idx[mid]!;
    const c = idx[hi]!;
    const pivot = less(a, b) ? (less(b, c) ? b : less(a, c) ? c : a) : less(a, c) ? a : less(b, c) ? c : b;
    const pivotAt = idx.indexOf(pivot, lo);
    idx[pivotAt] = idx[hi]!;
    idx[hi] = pivot;
    let store = lo;
    let sum = 0;
    for (let t = lo; t < hi; t++) {
      const e = idx[t]!;
      if (less(e, pivot)) {
        idx[t] = idx[store]!;
        idx[store] = e;
        sum += weight[e]!;
        store++;
      }
    }
    idx[hi] = idx[store]!;
    idx[store] = pivot;
    if (before + sum >= target) hi = store - 1;
    else if (before + sum + weight[pivot]! >= target) return maxToEnd(idx, store, less);
    else {
      before += sum + weight[pivot]!;
      lo = store + 1;
    }
  }
  return maxToEnd(idx, Math.max(0, Math.min(lo, idx.length - 1)), less);
}

function maxToEnd(idx: Int32Array, end: number, less: (a: number, b: number) => boolean): number {
  let max = end;
  for (let t = 0; t < end; t++) if (less(idx[max]!, idx[t]!)) max = t;
  const e = idx[max]!;
  idx[max] = idx[end]!;
  idx[end] = e;
  return end;
}
