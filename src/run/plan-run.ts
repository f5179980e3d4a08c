import type { Worker } from 'node:worker_threads';
import type { SolvedPlan } from '../api/plan-file.js';
import type { WireError } from '../api/wire.js';
import type { PlanJob, PlanWorkerMessage } from './plan-worker.js';
import { workerBeside } from './worker-run.js';

/** How a plan run in its worker thread ended. */
export type PlanRunOutcome =
  | { readonly state: 'done'; readonly solved: SolvedPlan; readonly boundaries: unknown; readonly notes: readonly string[] }
  | { readonly state: 'failed'; readonly error: WireError }
  | { readonly state: 'cancelled' };

export interface PlanRunHandle {
  readonly outcome: Promise<PlanRunOutcome>;
  /** Stops the thread at once (the run ends 'cancelled'); nothing it did is kept. */
  cancel(): Promise<void>;
}

export type WorkerFactory = (job: PlanJob) => Worker;

/** The plan worker beside this module: the bundled .mjs when built, the source through tsx otherwise. */
export const planWorker: WorkerFactory = (job) => workerBeside(import.meta.url, 'plan-worker', job);

/**
 * Runs one plan in a worker thread so that the window (and the local server) stay responsive.
 * Progress arrives through onProgress; a crash of the thread ends the run 'failed' with a message.
 */
export function startPlanRun(job: PlanJob, onProgress: (fraction: number, phase: string) => void, factory: WorkerFactory = planWorker): PlanRunHandle {
  let settle!: (o: PlanRunOutcome) => void;
  let settled = false;
  const outcome = new Promise<PlanRunOutcome>((resolve) => (settle = resolve));
  const finish = (o: PlanRunOutcome): void => {
    if (settled) return;
    settled = true;
    settle(o);
  };
  let worker: Worker;
  try {
    worker = factory(job);
  } catch (e) {
    finish({ state: 'failed', error: { kind: 'internal', message: `the plan run could not start: ${e instanceof Error ? e.message : String(e)}` } });
    return { outcome, cancel: async () => {} };
  }
  worker.on('message', (m: PlanWorkerMessage) => {
    if (settled) return;
    if (m.type === 'progress') onProgress(m.fraction, m.phase);
    else if (m.type === 'done') finish({ state: 'done', solved: m.solved, boundaries: m.boundaries, notes: m.notes });
    else if (m.type === 'error') finish(m.error.kind === 'cancelled' ? { state: 'cancelled' } : { state: 'failed', error: m.error });
  });
  worker.on('error', (e) => finish({ state: 'failed', error: { kind: 'internal', message: `the plan run stopped with an error: ${e.message}` } }));
  worker.on('exit', (code) => finish({ state: 'failed', error: { kind: 'internal', message: `the plan run stopped unexpectedly (exit code ${code})` } }));
  return {
    outcome,
    cancel: async () => {
      finish({ state: 'cancelled' });
      await worker.terminate();
    },
  };
}
