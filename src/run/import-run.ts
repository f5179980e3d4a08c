import type { Worker } from 'node:worker_threads';
import type { ImportJob, ImportRead } from './import-worker.js';
import { runInWorker, workerBeside, type WorkerRunHandle } from './worker-run.js';

export type ImportWorkerFactory = (job: ImportJob) => Worker;

/** The import worker beside this module: the bundled .mjs when built, the source through tsx otherwise. */
export const importWorker: ImportWorkerFactory = (job) => workerBeside(import.meta.url, 'import-worker', job);

/** Reads and checks a large stops file in a worker thread, so that the window (and the local server) stay responsive. */
export function startImportRead(job: ImportJob, factory: ImportWorkerFactory = importWorker): WorkerRunHandle<ImportRead> {
  return runInWorker<ImportRead, never>(() => factory(job), 'the import', () => {});
}
