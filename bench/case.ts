/**
 * One benchmark measurement in its own process (so that peak memory is its own):
 *   node --import tsx bench/case.ts <engine> <stops> <zones>
 * engine: zoneplan | ml-kmeans | skmeans. Prints one JSON line.
 * Every engine gets the same unit vectors with unit demand (the npm peers take no weights), and
 * every result is scored the same way: sum of (great-circle km from each stop to the centre of
 * its zone)^2, with the peer's centres normalised onto the sphere.
 */
import { kmeans } from 'ml-kmeans';
import skmeans from 'skmeans';
import { clusteredStops } from './data.js';
import type * as Lib from '../src/lib.js';

// The built bundle: what users run (worker threads included), not the TypeScript source.
const bundle = new URL('../dist/node/lib.mjs', import.meta.url).href;
const { solveZonesParallel, planFigures } = (await import(bundle)) as typeof Lib;

const [engine, nArg, kArg] = process.argv.slice(2);
const n = Number(nArg);
const k = Number(kArg);
const data = clusteredStops(n);
const ones = new Float64Array(n).fill(1);

function score(centres: Float64Array, assignment: Int32Array): number {
  return planFigures(data.units, ones, centres, assignment).objectiveKm2;
}

function normalised(rows: readonly (readonly number[])[]): Float64Array {
  const out = new Float64Array(3 * rows.length);
  rows.forEach((c, j) => {
    const norm = Math.hypot(c[0]!, c[1]!, c[2]!);
    out[3 * j] = c[0]! / norm;
    out[3 * j + 1] = c[1]! / norm;
    out[3 * j + 2] = c[2]! / norm;
  });
  return out;
}

globalThis.gc?.();
const baseRss = process.memoryUsage().rss;
let peakRss = baseRss;
const sampler = setInterval(() => {
  peakRss = Math.max(peakRss, process.memoryUsage().rss);
}, 20);

const t0 = performance.now();
let result: { objectiveKm2: number; iterations: number; converged: boolean | null; note?: string };
if (engine === 'zoneplan') {
  const r = await solveZonesParallel({ units: data.units, demand: ones }, { zones: k });
  result = { objectiveKm2: r.objectiveKm2, iterations: r.iterations, converged: r.converged, note: `best of ${r.restartObjectivesKm2.length} starts on ${r.startStops} stops` };
} else {
  const rows: number[][] = new Array(n);
  for (let i = 0; i < n; i++) rows[i] = [data.units[3 * i]!, data.units[3 * i + 1]!, data.units[3 * i + 2]!];
  if (engine === 'ml-kmeans') {
    const r = kmeans(rows, k, { seed: 1, initialization: 'kmeans++' });
    result = { objectiveKm2: score(normalised(r.centroids), Int32Array.from(r.clusters)), iterations: r.iterations, converged: r.converged, note: 'defaults: kmeans++, maxIterations 100, tolerance 1e-6' };
  } else if (engine === 'skmeans') {
    const r = skmeans(rows, k, 'kmpp');
    result = { objectiveKm2: score(normalised(r.centroids), Int32Array.from(r.idxs)), iterations: r.it, converged: null, note: 'kmpp init (not seedable: Math.random)' };
  } else throw new Error(`unknown engine ${engine}`);
}
const ms = performance.now() - t0;
clearInterval(sampler);
peakRss = Math.max(peakRss, process.memoryUsage().rss);
console.log(JSON.stringify({ engine, stops: n, zones: k, ms: Math.round(ms), ...result, peakRssMB: Math.round(peakRss / 2 ** 20), dataRssMB: Math.round(baseRss / 2 ** 20) }));
