/**
 * Worker thread entry that draws the zone polygons of a plan (after manual edits, for plans too
 * big to redraw at once) and posts them back.
 * Message in: BoundariesJob (workerData). Messages out: BoundariesWorkerMessage.
 */
import { parentPort, workerData } from 'node:worker_threads';
import { boundariesGeoJson } from '../api/boundaries-json.js';
import type { SolvedPlan } from '../api/plan-file.js';
import { toWireError } from '../api/wire-error.js';
import type { WorkerMessage } from './worker-run.js';

/** The plan to draw; the zone layer reads no stop ids or rows, so they may be left out. */
export interface BoundariesJob {
  readonly solved: SolvedPlan;
}

export type DrawnZones = { readonly geojson: unknown; readonly notes: string[] };

export type BoundariesWorkerMessage = WorkerMessage<DrawnZones, never>;

const job = workerData as BoundariesJob;
const post = (m: BoundariesWorkerMessage): void => parentPort!.postMessage(m);
try {
  post({ type: 'done', value: boundariesGeoJson(job.solved) });
} catch (e) {
  const error = toWireError(e);
  post({ type: 'error', error: error.kind === 'internal' ? { kind: 'internal', message: `internal error while drawing the zones: ${e instanceof Error ? e.message : String(e)}` } : error });
}
