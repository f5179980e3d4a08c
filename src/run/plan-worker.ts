/**
 * Worker thread entry of a plan run: solves the stops with the settings, draws the zone
 * boundaries, and posts progress and the result back.
 * Message in: PlanJob (workerData). Messages out: PlanWorkerMessage.
 */
import { parentPort, workerData } from 'node:worker_threads';
import { solveStops, type SolvedPlan } from '../api/plan-file.js';
import { boundariesGeoJson } from '../api/boundaries-json.js';
import { toWireError } from '../api/wire-error.js';
import type { PlanSettingsInput } from '../api/types.js';
import type { WireError } from '../api/wire.js';
import type { StopSet } from '../io/stopset.js';

export interface PlanJob {
  readonly stops: StopSet;
  readonly settings: PlanSettingsInput;
}

export type PlanWorkerMessage =
  | { readonly type: 'progress'; readonly fraction: number; readonly phase: string }
  | { readonly type: 'done'; readonly solved: SolvedPlan; readonly boundaries: unknown; readonly notes: string[] }
  | { readonly type: 'error'; readonly error: WireError };

const job = workerData as PlanJob;
const post = (m: PlanWorkerMessage): void => parentPort!.postMessage(m);
let last = -1;
try {
  const solved = await solveStops(job.stops, job.settings, {
    onProgress: (p) => {
      // A few hundred messages at most: every whole per cent, and each change of phase.
      const f = Math.floor(p.fraction * 100);
      if (f === last && p.phase !== 'done') return;
      last = f;
      post({ type: 'progress', fraction: Math.min(0.95, p.fraction * 0.95), phase: p.phase });
    },
  });
  post({ type: 'progress', fraction: 0.96, phase: 'boundaries' });
  const { geojson, notes } = boundariesGeoJson(solved);
  post({ type: 'done', solved, boundaries: geojson, notes });
} catch (e) {
  const error = toWireError(e);
  post({ type: 'error', error: error.kind === 'internal' ? { kind: 'internal', message: `internal error while planning: ${e instanceof Error ? e.message : String(e)}` } : error });
}
