/**
 * Worker thread entry of an import of a large stops file: reads and checks it (a million stops
 * take a few seconds) and posts the stops back, or the problems by row and field.
 * Message in: ImportJob (workerData). Messages out: ImportWorkerMessage.
 */
import { parentPort, workerData } from 'node:worker_threads';
import type { ImportSource } from '../api/app-types.js';
import { readStopsSource } from '../api/text-import.js';
import type { InputProblem, StopFileOptions } from '../api/types.js';
import { toWireError } from '../api/wire-error.js';
import { ImportError } from '../io/problems.js';
import type { StopSet } from '../io/stopset.js';
import type { WorkerMessage } from './worker-run.js';

export interface ImportJob {
  readonly source: ImportSource;
  readonly options: StopFileOptions;
}

/** The stops read, or why nothing can be imported (the problems as the import report lists them). */
export type ImportRead = { readonly ok: true; readonly stops: StopSet } | { readonly ok: false; readonly file: string; readonly problems: readonly InputProblem[]; readonly errorCount: number };

export type ImportWorkerMessage = WorkerMessage<ImportRead, never>;

const job = workerData as ImportJob;
const post = (m: ImportWorkerMessage): void => parentPort!.postMessage(m);
try {
  post({ type: 'done', value: { ok: true, stops: readStopsSource(job.source, job.options) } });
} catch (e) {
  if (e instanceof ImportError) post({ type: 'done', value: { ok: false, file: e.file, problems: e.problems.map((p) => ({ ...p })), errorCount: e.errorCount } });
  else {
    const error = toWireError(e);
    post({ type: 'error', error: error.kind === 'internal' ? { kind: 'internal', message: `internal error while importing: ${e instanceof Error ? e.message : String(e)}` } : error });
  }
}
