import type { ZoneBounds } from './capacity.js';
import { SolveError } from './types.js';

/**
 * Workload limits of a plan, as a planner states them. Demand is in the input's workload units
 * (parcels, service minutes, ...). Zone-wise values are arrays by zone index.
 */
export interface LimitSettings {
  /** No zone's total demand may exceed this (one value for all zones, or one per zone). */
  readonly capacity?: number | readonly number[];
  /** Every zone's demand within +-balance (e.g. 0.05) of the mean zone demand. */
  readonly balance?: number;
  /** Stop counts per zone, at least / at most (one value, or one per zone). */
  readonly minStops?: number | readonly number[];
  readonly maxStops?: number | readonly number[];
}

/** True when any limit is set. */
export function hasLimits(l: LimitSettings | undefined): boolean {
  return !!l && (l.capacity !== undefined || l.balance !== undefined || l.minStops !== undefined || l.maxStops !== undefined);
}

function perZone(v: number | readonly number[] | undefined, k: number, fallback: number, what: string): Float64Array {
  const out = new Float64Array(k).fill(fallback);
  if (v === undefined) return out;
  if (typeof v === 'number') {
    if (!(v >= 0)) throw new SolveError(`${what} must be a number >= 0, got ${v}`, 'settings');
    return out.fill(v);
  }
  if (v.length !== k) throw new SolveError(`${what} lists ${v.length} values for ${k} zones: give one per zone`, 'settings');
  v.forEach((x, j) => {
    if (!(x >= 0)) throw new SolveError(`${what} of zone ${j + 1} must be a number >= 0, got ${x}`, 'settings');
    out[j] = x;
  });
  return out;
}

/** A note about the settings that does not stop the plan. */
export interface LimitNote {
  readonly code: string;
  readonly message: string;
}

/**
 * Turns limit settings into per-zone bounds and checks, before any solving, that they can be met
 * at all: total demand against total capacity (and the smallest number of zones that would
 * carry it), the largest stop against the largest capacity, locked stops against their zones,
 * stop counts against the number of stops. Throws a SolveError ('infeasible') with the numbers.
 * Returns notes for settings that may be hard to meet (a band narrower than the largest stop).
 */
export function zoneBounds(
  limits: LimitSettings,
  k: number,
  demand: Float64Array,
  locked: Int32Array | null,
  stopLabel: (i: number) => string = (i) => `stop ${i + 1}`,
): { bounds: ZoneBounds; notes: LimitNote[] } {
  const n = demand.length;
  let total = 0;
  let largest = 0;
  let largestAt = -1;
  for (let i = 0; i < n; i++) {
    total += demand[i]!;
    if (demand[i]! > largest) {
      largest = demand[i]!;
      largestAt = i;
    }
  }
  const maxDemand = perZone(limits.capacity, k, Infinity, 'capacity');
  const minDemand = new Float64Array(k);
  const notes: LimitNote[] = [];
  if (limits.balance !== undefined) {
    const t = limits.balance;
    if (!(t >= 0 && t < 1)) throw new SolveError(`balance must be a fraction from 0 to below 1 (0.05 = within 5% of the mean zone demand), got ${t}`, 'settings');
    const mean = total / k;
    for (let j = 0; j < k; j++) {
      maxDemand[j] = Math.min(maxDemand[j]!, mean * (1 + t));
      minDemand[j] = mean * (1 - t);
    }
    if (largest > 2 * t * mean && k > 1) {
      notes.push({
        code: 'band-narrow',
        message: `the balance band (+-${(t * 100).toFixed(1)}% of the mean zone demand ${mean.toFixed(1)}, so ${(2 * t * mean).toFixed(1)} wide) is narrower than the largest stop (${stopLabel(largestAt)}, demand ${largest}); a zone may miss the band by up to one stop`,
      });
    }
  }
  const maxStops = perZone(limits.maxStops, k, Infinity, 'max stops');
  const minStops = perZone(limits.minStops, k, 0, 'min stops');

  let capTotal = 0;
  let capLargest = 0;
  let minTotal = 0;
  for (let j = 0; j < k; j++) {
    capTotal += maxDemand[j]!;
    capLargest = Math.max(capLargest, maxDemand[j]!);
    minTotal += minDemand[j]!;
    if (minDemand[j]! > maxDemand[j]! + 1e-9) {
      throw new SolveError(`zone ${j + 1} must carry at least ${minDemand[j]!.toFixed(2)} but may carry at most ${maxDemand[j]!.toFixed(2)}: no plan can do both`, 'infeasible');
    }
    if (minStops[j]! > maxStops[j]!) throw new SolveError(`zone ${j + 1} must have at least ${minStops[j]} stops but at most ${maxStops[j]}`, 'infeasible');
  }
  if (total > capTotal * (1 + 1e-12)) {
    // The fewest zones that could carry it: at the uniform capacity, or at the largest one.
    const caps = Array.from(maxDemand);
    const uniform = caps.every((c) => c === caps[0]) && Number.isFinite(caps[0]!) && caps[0]! > 0 ? caps[0]! : null;
    const largestCap = Math.max(...caps.filter((c) => Number.isFinite(c)));
    const need = uniform ? Math.ceil(total / uniform - 1e-9) : largestCap > 0 ? Math.ceil(total / largestCap - 1e-9) : null;
    throw new SolveError(
      `total demand ${fmt(total)} is more than the ${k} zones can carry together (${fmt(capTotal)})` +
        (need && uniform ? `: at capacity ${fmt(uniform)} at least ${need} zones are needed` : need ? `: even at the largest capacity (${fmt(largestCap)}) at least ${need} zones are needed` : ': raise capacities or add zones'),
      'infeasible',
    );
  }
  if (total < minTotal * (1 - 1e-12)) {
    throw new SolveError(`total demand ${fmt(total)} is less than the ${k} zones must carry together (${fmt(minTotal)})`, 'infeasible');
  }
  if (largestAt >= 0 && largest > capLargest * (1 + 1e-12) && !(locked && locked[largestAt]! >= 0)) {
    throw new SolveError(`${stopLabel(largestAt)} has demand ${fmt(largest)}, more than any zone may carry (largest capacity ${fmt(capLargest)})`, 'infeasible');
  }
  let stopsMax = 0;
  let stopsMin = 0;
  for (let j = 0; j < k; j++) {
    stopsMax += maxStops[j]!;
    stopsMin += minStops[j]!;
  }
  if (n > stopsMax) throw new SolveError(`${n} stops, but the zones may hold at most ${stopsMax} together (max stops per zone)`, 'infeasible');
  if (n < stopsMin) throw new SolveError(`${n} stops, but the zones must hold at least ${stopsMin} together (min stops per zone)`, 'infeasible');
  if (locked) {
    const lockedDemand = new Float64Array(k);
    const lockedStops = new Float64Array(k);
    for (let i = 0; i < n; i++) {
      const z = locked[i]!;
      if (z < 0) continue;
      if (z >= k) throw new SolveError(`${stopLabel(i)} is locked to zone ${z + 1}, but there are only ${k} zones`, 'settings');
      lockedDemand[z]! += demand[i]!;
      lockedStops[z]!++;
    }
    for (let j = 0; j < k; j++) {
      if (lockedDemand[j]! > maxDemand[j]! * (1 + 1e-12)) {
        throw new SolveError(`the stops locked to zone ${j + 1} carry ${fmt(lockedDemand[j]!)}, ${fmt(lockedDemand[j]! - maxDemand[j]!)} over its capacity ${fmt(maxDemand[j]!)}`, 'infeasible');
      }
      if (lockedStops[j]! > maxStops[j]!) {
        throw new SolveError(`${lockedStops[j]} stops are locked to zone ${j + 1}, more than its ${maxStops[j]} allowed`, 'infeasible');
      }
    }
  }
  // What the free stops must supply to bring every zone to its minimum, against what they have.
  {
    const lockedDemand = new Float64Array(k);
    const lockedStops = new Float64Array(k);
    let freeDemand = 0;
    const freeDemands: number[] = [];
    for (let i = 0; i < n; i++) {
      const z = locked ? locked[i]! : -1;
      if (z >= 0) {
        lockedDemand[z]! += demand[i]!;
        lockedStops[z]!++;
      } else {
        freeDemand += demand[i]!;
        freeDemands.push(demand[i]!);
      }
    }
    let needed = 0;
    let neededStops = 0;
    for (let j = 0; j < k; j++) {
      needed += Math.max(0, minDemand[j]! - lockedDemand[j]!);
      neededStops += Math.max(0, minStops[j]! - lockedStops[j]!);
    }
    if (needed > freeDemand * (1 + 1e-12) + 1e-9) {
      throw new SolveError(
        `the zones need ${fmt(needed)} more demand to reach their minimums than their locked stops give, but the stops that are not locked carry only ${fmt(freeDemand)}`,
        'infeasible',
      );
    }
    if (neededStops > freeDemands.length) {
      throw new SolveError(`the zones need ${neededStops} more stops to reach their minimum stop counts, but only ${freeDemands.length} stops are not locked`, 'infeasible');
    }
    // A zone's minimum stop count, filled with the smallest stops there are, must fit its capacity.
    freeDemands.sort((a, b) => a - b);
    const prefix = new Float64Array(freeDemands.length + 1);
    for (let t = 0; t < freeDemands.length; t++) prefix[t + 1] = prefix[t]! + freeDemands[t]!;
    for (let j = 0; j < k; j++) {
      const more = Math.max(0, Math.ceil(minStops[j]! - lockedStops[j]!));
      if (more === 0 || !Number.isFinite(maxDemand[j]!)) continue;
      const least = lockedDemand[j]! + prefix[Math.min(more, freeDemands.length)]!;
      if (least > maxDemand[j]! * (1 + 1e-12) + 1e-9) {
        throw new SolveError(
          `zone ${j + 1} must have at least ${minStops[j]} stops, but even the smallest ones carry ${fmt(least)}, over its capacity ${fmt(maxDemand[j]!)}`,
          'infeasible',
        );
      }
    }
  }
  return { bounds: { maxDemand, minDemand, maxStops, minStops }, notes };
}

/** The smallest number of zones whose uniform capacity carries the total demand. */
export function zonesForCapacity(demand: Float64Array, capacity: number): number {
  let total = 0;
  for (let i = 0; i < demand.length; i++) total += demand[i]!;
  if (!(capacity > 0)) throw new SolveError(`capacity must be above 0 to choose the number of zones, got ${capacity}`, 'settings');
  return Math.max(1, Math.ceil(total / capacity - 1e-9));
}

function fmt(x: number): string {
  return Number.isInteger(x) ? String(x) : x.toFixed(2);
}
