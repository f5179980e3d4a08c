/**
 * Worker thread entry of an export of a large plan: draws its layers (the zone polygons take
 * seconds at a million stops), writes the file atomically or gives its text, and posts the result.
 * Message in: ExportJob (workerData). Messages out: ExportWorkerMessage.
 */
import { parentPort, workerData } from 'node:worker_threads';
import type { ExportRequest, ExportResult } from '../api/app-types.js';
import type { SolvedPlan } from '../api/plan-file.js';
import { exportSolvedPlan } from '../api/plan-export.js';
import { toWireError } from '../api/wire-error.js';
import type { WorkerMessage } from './worker-run.js';

export interface ExportJob {
  readonly plan: SolvedPlan;
  readonly name: string;
  readonly kind: ExportRequest['kind'];
  readonly file: string | null;
}

export type ExportWorkerMessage = WorkerMessage<ExportResult, never>;

const job = workerData as ExportJob;
const post = (m: ExportWorkerMessage): void => parentPort!.postMessage(m);
try {
  post({ type: 'done', value: exportSolvedPlan(job.plan, job.name, job.kind, job.file) });
} catch (e) {
  const error = toWireError(e);
  post({ type: 'error', error: error.kind === 'internal' ? { kind: 'internal', message: `internal error while exporting: ${e instanceof Error ? e.message : String(e)}` } : error });
}
