/**
 * One measurement of the workload-limited engine in its own process (peak memory is its own):
 *
 *   node --import tsx bench/limits-case.ts step  <stops> <zones>   the assignment step alone
 *   node --import tsx bench/limits-case.ts glpk  <stops> <zones>   the same step by glpk.js
 *   node --import tsx bench/limits-case.ts plan  <stops> <zones>   the whole limited plan
 *   node --import tsx bench/limits-case.ts zones <stops> <zones>   boundaries + zone statistics
 *
 * Every case uses the benchmark's clustered stops (bench/data.ts, skewed demand) and a balance
 * band of +-5% around the mean zone demand. `step` and `glpk` solve the same LP at the same
 * centres (plain k-means centres, seed 1): minimise sum demand x great-circle km^2 with every
 * zone's demand within the band, stops splittable; `step` also reports its whole-stop plan.
 * Prints one JSON line.
 */
import GLPK from 'glpk.js/node';
import type { LP } from 'glpk.js/node';
import { clusteredStops } from './data.js';
import { solveZones } from '../src/solve/kmeans.js';
import { assignWithLimits } from '../src/solve/capacity.js';
import { angle2To } from '../src/solve/candidates.js';
import { zoneBounds } from '../src/solve/limits.js';
import { solveLimitedSteps } from '../src/solve/limited.js';
import { zoneBoundaries } from '../src/zones/boundaries.js';
import { planStatistics } from '../src/zones/report.js';
import { EARTH_RADIUS_KM } from '../src/geo/constants.js';

const [mode, nArg, kArg] = process.argv.slice(2);
const n = Number(nArg);
const k = Number(kArg);
const BALANCE = 0.05;
const data = clusteredStops(n);
const input = { units: data.units, demand: data.demand };

let peakRss = process.memoryUsage().rss;
const sampler = setInterval(() => {
  peakRss = Math.max(peakRss, process.memoryUsage().rss);
}, 20);
const sample = (): void => {
  peakRss = Math.max(peakRss, process.memoryUsage().rss);
};

function centresOf(): Float64Array {
  return solveZones(input, { zones: k, seed: 1, restarts: 1 }).centres;
}

let out: Record<string, unknown>;
if (mode === 'step' || mode === 'glpk') {
  const centres = centresOf();
  const { bounds } = zoneBounds({ balance: BALANCE }, k, data.demand, null);
  const t0 = performance.now();
  if (mode === 'step') {
    const r = assignWithLimits(data.units, data.demand, centres, bounds, null);
    const ms = performance.now() - t0;
    sample();
    out = { lpObjectiveKm2: r.lpObjectiveKm2, lowerBoundKm2: r.lowerBoundKm2, objectiveKm2: r.objectiveKm2, gap: r.gap, feasible: r.feasible, split: r.split, ms };
  } else {
    // The dense transportation LP (n x k variables) for GLPK's simplex.
    const glpk = await GLPK();
    const R2 = EARTH_RADIUS_KM * EARTH_RADIUS_KM;
    const vars: { name: string; coef: number }[] = [];
    const subjectTo: LP['subjectTo'] = [];
    const byZone = Array.from({ length: k }, () => [] as { name: string; coef: number }[]);
    for (let i = 0; i < n; i++) {
      const row: { name: string; coef: number }[] = [];
      for (let j = 0; j < k; j++) {
        const name = `x${i}_${j}`;
        vars.push({ name, coef: data.demand[i]! * angle2To(data.units, i, centres, j) * R2 });
        row.push({ name, coef: 1 });
        byZone[j]!.push({ name, coef: data.demand[i]! });
      }
      subjectTo.push({ name: `s${i}`, vars: row, bnds: { type: glpk.GLP_FX, lb: 1, ub: 1 } });
    }
    for (let j = 0; j < k; j++) subjectTo.push({ name: `z${j}`, vars: byZone[j]!, bnds: { type: glpk.GLP_DB, lb: bounds.minDemand[j]!, ub: bounds.maxDemand[j]! } });
    const res = glpk.solve({ name: 'step', objective: { direction: glpk.GLP_MIN, name: 'km2', vars }, subjectTo }, { msglev: glpk.GLP_MSG_OFF });
    const ms = performance.now() - t0;
    sample();
    out = { lpObjectiveKm2: res.result.z, status: res.result.status === glpk.GLP_OPT ? 'optimal' : String(res.result.status), ms };
  }
} else if (mode === 'plan') {
  const t0 = performance.now();
  const run = solveLimitedSteps(input, { zones: k, seed: 1, limits: { balance: BALANCE } });
  let s = run.next();
  while (!s.done) s = run.next();
  const r = s.value;
  const ms = performance.now() - t0;
  sample();
  out = { objectiveKm2: r.objectiveKm2, lowerBoundKm2: r.limits?.lowerBoundKm2, gap: r.limits?.gap, feasible: r.limits?.feasible, iterations: r.iterations, converged: r.converged, ms };
} else if (mode === 'zones') {
  const r = solveZones(input, { zones: k, seed: 1, restarts: 1 });
  const t0 = performance.now();
  const b = zoneBoundaries(data.units, r.assignment, k);
  const stats = planStatistics(data.units, data.demand, data.lonLat, r.centres, r.assignment, b, null);
  const ms = performance.now() - t0;
  sample();
  out = { serviceAreaKm2: b.serviceAreaKm2, outside: stats.outsideOwnZone, ms };
} else throw new Error(`unknown mode ${mode}`);
clearInterval(sampler);
console.log(JSON.stringify({ mode, stops: n, zones: k, ...out, ms: Math.round(out['ms'] as number), peakRssMB: Math.round(peakRss / 2 ** 20) }));
