import type { Worker } from 'node:worker_threads';
import type { SolvedPlan } from '../api/plan-file.js';
import type { StopSet } from '../io/stopset.js';
import type { BoundariesJob, DrawnZones } from './boundaries-worker.js';
import { runInWorker, workerBeside, type WorkerOutcome, type WorkerRunHandle } from './worker-run.js';

export type BoundariesWorkerFactory = (job: BoundariesJob) => Worker;

/** The boundaries worker beside this module: the bundled .mjs when built, the source through tsx otherwise. */
export const boundariesWorker: BoundariesWorkerFactory = (job) => workerBeside(import.meta.url, 'boundaries-worker', job);

/** The stops of each plan in shared memory, made once and reused by every drawing of the plan. */
const sharedStops = new WeakMap<StopSet, StopSet>();

function sharedCopy(a: Float64Array): Float64Array {
  const out = new Float64Array(new SharedArrayBuffer(a.byteLength));
  out.set(a);
  return out;
}

/**
 * The plan as the worker needs it: its stops in shared memory (the same for every state of a plan,
 * so not copied again for each edit), without their ids and rows, which the zone layer does not
 * read; the plan's own arrays, which change with the edits, copied.
 */
export function boundariesJob(solved: SolvedPlan): BoundariesJob {
  const { stops, plan, result, figures } = solved;
  let shared = sharedStops.get(stops);
  if (!shared) {
    shared = { ...stops, ids: [], rows: new Int32Array(0), units: sharedCopy(stops.units), lonLat: sharedCopy(stops.lonLat), demand: sharedCopy(stops.demand) };
    sharedStops.set(stops, shared);
  }
  return { solved: { stops: shared, plan, result, figures: { ...figures, stopKm: new Float64Array(0) } } };
}

/**
 * Draws zone polygons in worker threads, one plan state at a time per key (a plan): asking for a
 * newer state stops the drawing of the older one at once, and a result that is no longer the
 * newest asked for is dropped, so that quick successive edits never queue up stale drawings.
 */
export class LatestDrawings {
  private readonly running = new Map<string, { readonly version: number; readonly run: WorkerRunHandle<DrawnZones> }>();

  constructor(private readonly factory: BoundariesWorkerFactory = boundariesWorker) {}

  /**
   * Draws state `version` of `key` (unless it or a newer state is being drawn already); `onEnd`
   * hears how it ended only while it is still the newest state asked for.
   */
  draw(key: string, version: number, solved: SolvedPlan, onEnd: (o: WorkerOutcome<DrawnZones>) => void): void {
    const now = this.running.get(key);
    // Being drawn already, or a newer state is.
    if (now && now.version >= version) return;
    if (now) void now.run.cancel();
    const rec = { version, run: runInWorker<DrawnZones, never>(() => this.factory(boundariesJob(solved)), 'drawing the zones', () => {}) };
    this.running.set(key, rec);
    void rec.run.outcome.then((o) => {
      if (this.running.get(key) !== rec) return;
      this.running.delete(key);
      onEnd(o);
    });
  }

  /** Stops the drawing of `key` (none of it is kept). */
  async cancel(key: string): Promise<void> {
    const now = this.running.get(key);
    this.running.delete(key);
    await now?.run.cancel();
  }

  async cancelAll(): Promise<void> {
    const all = [...this.running.values()];
    this.running.clear();
    await Promise.all(all.map((r) => r.run.cancel()));
  }
}
