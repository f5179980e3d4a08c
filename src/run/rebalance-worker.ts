/**
 * Worker thread entry of a rebalance: rebalances a plan onto a new stop set, draws the new plan's
 * zone boundaries, and posts progress and the result back.
 * Message in: RebalanceJob (workerData). Messages out: RebalanceWorkerMessage.
 */
import { parentPort, workerData } from 'node:worker_threads';
import { boundariesGeoJson } from '../api/boundaries-json.js';
import type { SolvedPlan } from '../api/plan-file.js';
import { rebalancePlan } from '../api/rebalance.js';
import type { RebalanceReport } from '../api/types.js';
import { toWireError } from '../api/wire-error.js';
import type { StopSet } from '../io/stopset.js';
import type { Plan } from '../solve/plan.js';
import type { MoveBudget } from '../solve/rebalance.js';
import type { WorkerMessage } from './worker-run.js';

export interface RebalanceJob {
  /** The plan as it is now (with its manual edits): its stops, its arrays, its pinned centres. */
  readonly old: { readonly stops: StopSet; readonly plan: Plan; readonly pinned?: Uint8Array };
  /** The new stop set. */
  readonly stops: StopSet;
  readonly budget: MoveBudget | null;
}

/** What a rebalance gives: the new plan, its report, and its zone boundaries (GeoJSON, or null with notes). */
export interface RebalanceOutput {
  readonly solved: SolvedPlan;
  readonly report: RebalanceReport;
  readonly boundaries: unknown;
}

/** Along the way: how far the rebalance is (0..1) and what it does. */
export interface RebalanceProgress {
  readonly fraction: number;
  readonly phase: 'rebalance' | 'boundaries';
}

export type RebalanceWorkerMessage = WorkerMessage<RebalanceOutput, RebalanceProgress>;

const job = workerData as RebalanceJob;
const post = (m: RebalanceWorkerMessage): void => parentPort!.postMessage(m);
try {
  const { solved, report } = rebalancePlan(job.old, job.stops, {
    ...(job.budget ? { budget: job.budget } : {}),
    // The solve takes up to 95% of the bar; the boundaries the rest.
    onProgress: (f) => post({ type: 'progress', progress: { fraction: 0.95 * f, phase: 'rebalance' } }),
  });
  post({ type: 'progress', progress: { fraction: 0.96, phase: 'boundaries' } });
  const { geojson } = boundariesGeoJson(solved);
  post({ type: 'done', value: { solved, report, boundaries: geojson } });
} catch (e) {
  const error = toWireError(e);
  post({ type: 'error', error: error.kind === 'internal' ? { kind: 'internal', message: `internal error while rebalancing: ${e instanceof Error ? e.message : String(e)}` } : error });
}
