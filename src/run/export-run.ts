import type { Worker } from 'node:worker_threads';
import type { ExportResult } from '../api/app-types.js';
import type { ExportJob } from './export-worker.js';
import { runInWorker, workerBeside, type WorkerRunHandle } from './worker-run.js';

export type ExportWorkerFactory = (job: ExportJob) => Worker;

/** The export worker beside this module: the bundled .mjs when built, the source through tsx otherwise. */
export const exportWorker: ExportWorkerFactory = (job) => workerBeside(import.meta.url, 'export-worker', job);

/** Exports a plan in a worker thread, so that the window (and the local server) stay responsive. */
export function startExportRun(job: ExportJob, factory: ExportWorkerFactory = exportWorker): WorkerRunHandle<ExportResult> {
  return runInWorker<ExportResult, never>(() => factory(job), 'the export', () => {});
}
