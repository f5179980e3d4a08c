/**
 * Worker thread entry of a sweep: plans the stops for every number of zones in the range and
 * posts each row as soon as its number of zones is done, then the end.
 * Message in: SweepJob (workerData). Messages out: SweepWorkerMessage.
 */
import { parentPort, workerData } from 'node:worker_threads';
import { sweepStops } from '../api/sweep.js';
import { toWireError } from '../api/wire-error.js';
import type { PlanSettingsInput, SweepRow } from '../api/types.js';
import type { StopSet } from '../io/stopset.js';
import type { WorkerMessage } from './worker-run.js';

export interface SweepJob {
  readonly stops: StopSet;
  readonly settings: Omit<PlanSettingsInput, 'zones'>;
  readonly range: { readonly from: number; readonly to: number; readonly step?: number };
}

/** Along the way: a row as soon as its number of zones is done, or how far the sweep is (0..1). */
export type SweepProgress = { readonly row: SweepRow } | { readonly fraction: number };

export type SweepWorkerMessage = WorkerMessage<null, SweepProgress>;

const job = workerData as SweepJob;
const post = (m: SweepWorkerMessage): void => parentPort!.postMessage(m);
let last = -1;
try {
  await sweepStops(job.stops, job.settings, job.range, {
    onProgress: (p) => {
      // A few hundred messages at most: every whole per cent.
      const f = Math.floor(p.fraction * 100);
      if (f === last) return;
      last = f;
      post({ type: 'progress', progress: { fraction: Math.min(1, p.fraction) } });
    },
    onRow: (row) => post({ type: 'progress', progress: { row } }),
  });
  post({ type: 'done', value: null });
} catch (e) {
  const error = toWireError(e);
  post({ type: 'error', error: error.kind === 'internal' ? { kind: 'internal', message: `internal error while sweeping: ${e instanceof Error ? e.message : String(e)}` } : error });
}
