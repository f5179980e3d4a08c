import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { runLloyd, solveZones } from '../../src/solve/kmeans.js';
import { ZoneEngine } from '../../src/solve/engine.js';
import { planFigures } from '../../src/zones/stats.js';
import { unitFromLonLat } from '../../src/geo/unit.js';
import { karcherMean, sphericalMean } from '../../src/geo/mean.js';
import { angleBetween } from '../../src/geo/distance.js';
import { Random } from '../../src/util/random.js';
import type { SolveInput } from '../../src/solve/types.js';
import { comparedSteps, historyRises, notNearest, stopsFromLonLat, totalDemand, zoneCounts } from './support.js';

/** Random stops of one of four shapes: whole globe, a continent, a town, a few repeated places. */
function randomStops(seed: number, n: number, shape: number, weighted: boolean): SolveInput {
  const r = new Random(seed, 17);
  const lon0 = 360 * r.next() - 180;
  const lat0 = 160 * r.next() - 80;
  const pts: [number, number][] = [];
  const demand: number[] = [];
  for (let i = 0; i < n; i++) {
    if (shape === 0) pts.push([360 * r.next() - 180, (Math.asin(2 * r.next() - 1) * 180) / Math.PI]);
    else if (shape === 1) pts.push([lon0 + 30 * r.next(), Math.min(90, lat0 + 20 * r.next())]);
    else if (shape === 2) pts.push([lon0 + 0.05 * r.next(), Math.min(90, lat0 + 0.03 * r.next())]);
    else pts.push(i < 8 ? [lon0 + r.next(), lat0 + r.next()] : pts[r.nextInt(8)]!);
    demand.push(weighted ? (r.next() < 0.15 ? 0 : 0.1 + 10 * r.next()) : 1);
  }
  if (!demand.some((w) => w > 0)) demand[0] = 1;
  return stopsFromLonLat(pts, demand);
}

function distinctLocations(units: Float64Array): number {
  const s = new Set<string>();
  for (let i = 0; i < units.length / 3; i++) s.add(`${units[3 * i]},${units[3 * i + 1]},${units[3 * i + 2]}`);
  return s.size;
}

describe('solveZones: the pruned assignment is exact', () => {
  it('after convergence every stop is in the zone of its nearest centre (brute force), and the objective is the planFigures sum', () => {
    let converged = 0;
    fc.assert(
      fc.property(
        fc.integer({ min: 0, max: 2 ** 31 }),
        fc.integer({ min: 2, max: 400 }),
        fc.integer({ min: 0, max: 3 }),
        fc.boolean(),
        fc.integer({ min: 1, max: 16 }),
        fc.constantFrom('arc' as const, 'mean' as const),
        (seed, n, shape, weighted, kWanted, centre) => {
          const input = randomStops(seed, n, shape, weighted);
          const k = Math.min(kWanted, distinctLocations(input.units));
          const result = solveZones(input, { zones: k, seed, centre, restarts: 2 });
          expect(result.assignment.length).toBe(n);
          // Converged runs, and every 'arc' run (its last step assigns against the final centres),
          // must be exact. Only 'arc' may end unconverged here: on globe-wide sets with small K its
          // centres creep towards the Karcher mean for more than its 50 rounds (see the report).
          if (!result.converged) expect(centre).toBe('arc');
          else converged++;
          expect(notNearest(input.units, result.centres, result.assignment)).toEqual([]);
          const counts = zoneCounts(result.assignment, k);
          expect(counts.every((c) => c > 0)).toBe(true);
          const figures = planFigures(input.units, input.demand, result.centres, result.assignment);
          expect(Math.abs(figures.objectiveKm2 - result.objectiveKm2)).toBeLessThanOrEqual(1e-9 * figures.objectiveKm2 + 1e-12);
          expect(historyRises(result, totalDemand(input))).toEqual([]);
        },
      ),
      { numRuns: 120 },
    );
    expect(converged).toBeGreaterThan(80);
  });

  it('the brute-force check is not vacuous: it sees a stop put in the wrong zone', () => {
    const input = randomStops(3, 200, 1, true);
    const result = solveZones(input, { zones: 6, seed: 3 });
    const wrong = result.assignment.slice();
    wrong[17] = (wrong[17]! + 1) % 6;
    expect(notNearest(input.units, result.centres, wrong)).toEqual([17]);
  });

  it('exact on a larger clustered set with many iterations (the active-set passes)', () => {
    // 6000 stops spread evenly over western Europe: no natural clusters, so Lloyd takes many steps.
    const r = new Random(2);
    const pts: [number, number][] = [];
    for (let i = 0; i < 6000; i++) pts.push([-10 + 40 * r.next(), 35 + 25 * r.next()]);
    const input = stopsFromLonLat(pts);
    const result = solveZones(input, { zones: 30, seed: 11, centre: 'mean' });
    expect(result.converged).toBe(true);
    expect(result.iterations).toBeGreaterThan(5);
    expect(result.distanceEvaluations).toBeLessThan(result.naiveDistanceEvaluations);
    expect(notNearest(input.units, result.centres, result.assignment)).toEqual([]);
    expect(historyRises(result, totalDemand(input))).toEqual([]);
    expect(comparedSteps(result, 'mean')).toBeGreaterThan(20);
  });
});

describe('solveZones: result', () => {
  const input = randomStops(5, 600, 1, true);

  it('keeps the start with the lowest objective and reports every start', () => {
    const result = solveZones(input, { zones: 8, seed: 4, restarts: 5, centre: 'mean' });
    expect(result.restartObjectivesKm2.length).toBe(5);
    const best = Math.min(...result.restartObjectivesKm2);
    expect(result.restartObjectivesKm2[result.bestRestart]).toBe(best);
    expect(result.objectiveKm2).toBe(best); // 'mean': no refinement after the starts
    expect(result.seed).toBe(4);
    expect(result.zones).toBe(8);
    expect(result.centres.length).toBe(24);
  });

  it("'arc' refines the kept start: the great-circle objective does not rise, and centres move to the zones' Karcher means", () => {
    const mean = solveZones(input, { zones: 8, seed: 4, restarts: 3, centre: 'mean' });
    const arc = solveZones(input, { zones: 8, seed: 4, restarts: 3, centre: 'arc' });
    expect(arc.restartObjectivesKm2).toEqual(mean.restartObjectivesKm2);
    expect(arc.objectiveKm2).toBeLessThanOrEqual(mean.objectiveKm2);
    expect(arc.history.some((h) => h.phase === 'arc')).toBe(true);
    expect(mean.history.some((h) => h.phase === 'arc')).toBe(false);
    expect(arc.converged).toBe(true);
    // every 'arc' centre is the Karcher mean of its zone (and 'mean' centres are vector means)
    for (let j = 0; j < 8; j++) {
      for (const [result, rule] of [[arc, karcherMean], [mean, sphericalMean]] as const) {
        const members: number[] = [];
        const weights: number[] = [];
        result.assignment.forEach((z, i) => {
          if (z !== j) return;
          members.push(input.units[3 * i]!, input.units[3 * i + 1]!, input.units[3 * i + 2]!);
          weights.push(input.demand[i]!);
        });
        const expected = rule(members, weights)!;
        const c = result.centres;
        expect(angleBetween(c[3 * j]!, c[3 * j + 1]!, c[3 * j + 2]!, ...expected)).toBeLessThan(1e-8);
      }
    }
  });

  it('is deterministic for a seed', () => {
    const a = solveZones(input, { zones: 7, seed: 9 });
    const b = solveZones(input, { zones: 7, seed: 9 });
    expect(b.objectiveKm2).toBe(a.objectiveKm2);
    expect([...b.assignment]).toEqual([...a.assignment]);
    expect([...b.centres]).toEqual([...a.centres]);
  });

  it('runs the starts on a sample when there are many stops, then continues on all of them exactly', () => {
    const big = randomStops(8, 3000, 1, false);
    const result = solveZones(big, { zones: 12, seed: 2, sampleStops: 500 });
    expect(result.startStops).toBe(500);
    expect(result.history.some((h) => h.stops === 500)).toBe(true);
    expect(result.history.some((h) => h.stops === 3000)).toBe(true);
    expect(notNearest(big.units, result.centres, result.assignment)).toEqual([]);
    expect(historyRises(result, totalDemand(big))).toEqual([]);
    const all = solveZones(big, { zones: 12, seed: 2, sampleStops: 0 });
    expect(all.startStops).toBe(3000);
    // a plan from sampled starts is not much worse than one from starts on every stop
    expect(result.objectiveKm2).toBeLessThan(1.1 * all.objectiveKm2);
  });

  it('K = 1 puts the one centre at the Karcher mean of all stops, K = n puts one stop per zone', () => {
    const few = stopsFromLonLat([[0, 0], [2, 0], [1, 1.5]], [1, 1, 1]);
    const one = solveZones(few, { zones: 1 });
    expect([...one.assignment]).toEqual([0, 0, 0]);
    const k = karcherMean(few.units)!;
    expect(angleBetween(one.centres[0]!, one.centres[1]!, one.centres[2]!, ...k)).toBeLessThan(1e-9);
    const each = solveZones(few, { zones: 3 });
    expect(each.objectiveKm2).toBeLessThan(1e-18);
    expect(new Set(each.assignment).size).toBe(3);
  });
});

describe('empty zones are re-seeded, not dropped', () => {
  // 35 stops at 5 places on the equator (0.1, 0.54, 0.6, 1.0, 1.1 degrees E), the one at 0.54
  // three times as busy: with seeds at 0.1, 1.0 and 1.1, the zone of 1.0 takes 0.6 and 1.0, its
  // mean moves to 0.8, and then both its stops are nearer other centres: it goes empty.
  const places = [0.1, 0.54, 0.6, 1.0, 1.1];
  const copies = [5, 15, 5, 5, 5];
  const pts: [number, number][] = [];
  places.forEach((lon, p) => {
    for (let c = 0; c < copies[p]!; c++) pts.push([lon, 0]);
  });
  const input = stopsFromLonLat(pts);

  it('in the engine: a zone that goes empty gets a stop, and every zone ends with stops', () => {
    const engine = new ZoneEngine(input.units, input.demand, 3);
    const centres = new Float64Array(9);
    [0.1, 1.0, 1.1].forEach((lon, j) => centres.set(unitFromLonLat(lon, 0), 3 * j));
    const first = new Int32Array(input.demand.length);
    pts.forEach(([lon], i) => (first[i] = lon < 0.55 ? 0 : lon < 1.05 ? 1 : 2));
    engine.start(centres, first);
    const run = runLloyd(engine, 0, 100, 0);
    let step = run.next();
    while (!step.done) step = run.next();
    const result = step.value;
    expect(result.reseeded).toBeGreaterThan(0);
    expect(result.converged).toBe(true);
    expect(zoneCounts(result.assignment, 3).every((c) => c > 0)).toBe(true);
    expect(notNearest(input.units, result.centres, result.assignment)).toEqual([]);
  });

  it('through solveZones, duplicates and K near the distinct count: K zones with stops for every seed', () => {
    // Whether a run meets an empty zone depends on the seeding; the zones must never be dropped.
    // (With plain k-means++ seeding some of these runs do re-seed; with greedy seeding none may.)
    for (const k of [3, 4]) {
      for (let seed = 0; seed < 200; seed++) {
        const result = solveZones(input, { zones: k, seed, restarts: 1, centre: seed % 2 ? 'arc' : 'mean' });
        const counts = zoneCounts(result.assignment, k);
        expect(counts.every((c) => c > 0), `K ${k}, seed ${seed}: ${counts}`).toBe(true);
        expect(result.centres.length).toBe(3 * k);
        expect(notNearest(input.units, result.centres, result.assignment)).toEqual([]);
      }
    }
  });

  it('K equal to the number of distinct places: one place per zone', () => {
    for (let seed = 0; seed < 50; seed++) {
      const result = solveZones(input, { zones: 5, seed });
      const counts = zoneCounts(result.assignment, 5);
      expect([...counts].sort((a, b) => a - b)).toEqual([5, 5, 5, 5, 15]);
      expect(result.objectiveKm2).toBeLessThan(1e-12);
    }
  });
});
