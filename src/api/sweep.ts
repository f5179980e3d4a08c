import { readStopsFile } from '../io/read.js';
import type { StopSet } from '../io/stopset.js';
import { DISTANCE_NOTE } from '../io/plan-geojson.js';
import { SolveError } from '../solve/types.js';
import { solveStops, type RunHooks } from './plan-file.js';
import { checkReport } from './report.js';
import type { PlanSettingsInput, StopFileOptions, SweepReport, SweepRow } from './types.js';

/** Workload spread of zone demands: largest over smallest, and coefficient of variation. */
export function workloadSpread(demands: readonly number[]): { maxMinRatio: number; cv: number } {
  const k = demands.length;
  if (k === 0) return { maxMinRatio: 1, cv: 0 };
  let max = -Infinity;
  let min = Infinity;
  let sum = 0;
  for (const d of demands) {
    max = Math.max(max, d);
    min = Math.min(min, d);
    sum += d;
  }
  const mean = sum / k;
  let ss = 0;
  for (const d of demands) ss += (d - mean) ** 2;
  return { maxMinRatio: min > 0 ? max / min : Infinity, cv: mean > 0 ? Math.sqrt(ss / k) / mean : 0 };
}

/**
 * Plans the stops for every number of zones in [from, to] (every `step`) with the same other
 * settings, and reports objective and workload spread per K.
 */
export async function sweepStopsFile(
  file: string,
  read: StopFileOptions,
  settings: Omit<PlanSettingsInput, 'zones'>,
  range: { from: number; to: number; step?: number },
  hooks: RunHooks & { onRow?: (row: SweepRow) => void } = {},
): Promise<SweepReport> {
  const stops = readStopsFile(file, read);
  const rows = await sweepStops(stops, settings, range, hooks);
  return { input: checkReport(stops), rows, distanceNote: DISTANCE_NOTE };
}

/** The sweep over stops already read (a project's stop set): one row per number of zones. */
export async function sweepStops(
  stops: StopSet,
  settings: Omit<PlanSettingsInput, 'zones'>,
  range: { from: number; to: number; step?: number },
  hooks: RunHooks & { onRow?: (row: SweepRow) => void } = {},
): Promise<SweepRow[]> {
  const step = range.step ?? 1;
  if (!(Number.isInteger(range.from) && Number.isInteger(range.to) && range.from >= 1 && range.to >= range.from)) {
    throw new SolveError(`the zone range must be whole numbers FROM..TO with 1 <= FROM <= TO, got ${range.from}..${range.to}`, 'settings');
  }
  if (!(Number.isInteger(step) && step >= 1)) throw new SolveError(`the sweep step must be a whole number >= 1, got ${step}`, 'settings');
  const rows: SweepRow[] = [];
  const ks: number[] = [];
  for (let k = range.from; k <= range.to; k += step) ks.push(k);
  for (const [t, k] of ks.entries()) {
    const t0 = performance.now();
    let solved;
    try {
      solved = await solveStops(stops, { ...settings, zones: k }, {
        ...(hooks.signal ? { signal: hooks.signal } : {}),
        onProgress: (p) => hooks.onProgress?.({ ...p, fraction: (t + p.fraction) / ks.length }),
      });
    } catch (e) {
      // A zone count that cannot carry the limits is a row of the answer, not the end of it.
      if (!(e instanceof SolveError) || (e.code !== 'infeasible' && e.code !== 'too-few-locations')) throw e;
      const row: SweepRow = { zones: k, objectiveKm2: Number.NaN, maxMinRatio: Number.NaN, demandCv: Number.NaN, meanKm: Number.NaN, maxKm: Number.NaN, feasible: false, gap: null, ms: performance.now() - t0, note: e.message };
      rows.push(row);
      hooks.onRow?.(row);
      continue;
    }
    const zones = solved.figures.zones;
    const spread = workloadSpread(zones.map((z) => z.demand));
    let sumWKm = 0;
    let maxKm = 0;
    for (const z of zones) {
      sumWKm += z.meanKm * z.demand;
      maxKm = Math.max(maxKm, z.maxKm);
    }
    const limits = solved.plan.limits;
    const row: SweepRow = {
      zones: k,
      objectiveKm2: solved.figures.objectiveKm2,
      maxMinRatio: spread.maxMinRatio,
      demandCv: spread.cv,
      meanKm: solved.figures.totalDemand > 0 ? sumWKm / solved.figures.totalDemand : 0,
      maxKm,
      feasible: limits ? limits.feasible : null,
      gap: limits && !limits.blocked ? limits.gap : null,
      ms: performance.now() - t0,
    };
    rows.push(row);
    hooks.onRow?.(row);
  }
  return rows;
}
