import type { Worker } from 'node:worker_threads';
import type { SweepRow } from '../api/types.js';
import type { SweepJob, SweepProgress } from './sweep-worker.js';
import { runInWorker, workerBeside, type WorkerOutcome } from './worker-run.js';

export type SweepWorkerFactory = (job: SweepJob) => Worker;

/** The sweep worker beside this module: the bundled .mjs when built, the source through tsx otherwise. */
export const sweepWorker: SweepWorkerFactory = (job) => workerBeside(import.meta.url, 'sweep-worker', job);

export interface SweepRunHandle {
  /** 'done' once every number of zones has its row (the rows came through onRow). */
  readonly outcome: Promise<WorkerOutcome<null>>;
  /** Stops the thread at once (the sweep ends 'cancelled'); the rows already given stay whole. */
  cancel(): Promise<void>;
}

/**
 * Runs a sweep in a worker thread so that the window (and the local server) stay responsive:
 * each row arrives through onRow as soon as its number of zones is done, in order.
 */
export function startSweepRun(job: SweepJob, onRow: (row: SweepRow) => void, onFraction: (fraction: number) => void, factory: SweepWorkerFactory = sweepWorker): SweepRunHandle {
  return runInWorker<null, SweepProgress>(() => factory(job), 'the sweep', (p) => ('row' in p ? onRow(p.row) : onFraction(p.fraction)));
}
