import type { Worker } from 'node:worker_threads';
import type { RebalanceJob, RebalanceOutput, RebalanceProgress } from './rebalance-worker.js';
import { runInWorker, workerBeside, type WorkerRunHandle } from './worker-run.js';

export type RebalanceWorkerFactory = (job: RebalanceJob) => Worker;

/** The rebalance worker beside this module: the bundled .mjs when built, the source through tsx otherwise. */
export const rebalanceWorker: RebalanceWorkerFactory = (job) => workerBeside(import.meta.url, 'rebalance-worker', job);

/**
 * Runs a rebalance in a worker thread so that the window (and the local server) stay responsive;
 * progress arrives through onProgress, and cancel() stops the thread at once (nothing is saved).
 */
export function startRebalanceRun(job: RebalanceJob, onProgress: (p: RebalanceProgress) => void, factory: RebalanceWorkerFactory = rebalanceWorker): WorkerRunHandle<RebalanceOutput> {
  return runInWorker<RebalanceOutput, RebalanceProgress>(() => factory(job), 'the rebalance', onProgress);
}
