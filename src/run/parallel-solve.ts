import { Worker } from 'node:worker_threads';
import { availableParallelism } from 'node:os';
import { finishSteps, prepareStarts, runStartAlone, type StartOutcome } from '../solve/kmeans.js';
import { SolveError, type SolveInput, type SolveProgress, type SolveResult, type SolveSettings } from '../solve/types.js';
import { drive } from '../solve/drive.js';

/** What a start worker is given: the stops the starts run on (shared, not copied) and which starts. */
export interface StartJob {
  readonly units: SharedArrayBuffer;
  readonly demand: SharedArrayBuffer;
  readonly k: number;
  readonly seed: number;
  readonly maxIterations: number;
  readonly restarts: readonly number[];
}

export interface ParallelHooks {
  onProgress?: (p: SolveProgress) => void;
  signal?: AbortSignal;
  /** Worker threads; default min(2, cores). 1 runs every start on this thread. */
  threads?: number;
}

/**
 * Starts the worker script beside this module: the bundled .mjs when built; the .ts source,
 * through tsx's loader, when running from source (tests, development).
 */
function startWorker(job: StartJob): Worker {
  const here = import.meta.url;
  if (!here.endsWith('.ts')) return new Worker(new URL('./start-worker.mjs', here), { workerData: job });
  return new Worker(new URL('./start-worker-dev.mjs', here), { workerData: job });
}

function shared(src: Float64Array): SharedArrayBuffer {
  const buf = new SharedArrayBuffer(src.byteLength);
  new Float64Array(buf).set(src);
  return buf;
}

/**
 * The same solve as solveZonesAsync, with the independent starts spread over worker threads.
 * Each start depends only on (seed, start number), so the plan is identical whatever the number
 * of threads. The continuation and refinement run here, yielding to the event loop between
 * iterations. Cancelling terminates the workers and throws a SolveError 'cancelled'.
 */
export async function solveZonesParallel(input: SolveInput, settings: SolveSettings, hooks: ParallelHooks = {}): Promise<SolveResult> {
  const cancelled = (): never => {
    throw new SolveError('the plan run was cancelled; nothing was changed', 'cancelled');
  };
  if (hooks.signal?.aborted) cancelled();
  const prepared = prepareStarts(input, settings);
  const threads = Math.max(1, Math.min(hooks.threads ?? Math.min(2, availableParallelism()), prepared.restarts));
  const outcomes: StartOutcome[] = [];
  let done = 0;
  const report = (o: StartOutcome): void => {
    outcomes.push(o);
    done++;
    hooks.onProgress?.({
      phase: 'mean',
      restart: o.result.restart,
      restarts: prepared.restarts,
      iteration: o.result.iterations,
      moved: 0,
      objectiveKm2: Number.NaN,
      fraction: done / prepared.stages,
    });
  };

  if (threads === 1) {
    for (let r = 0; r < prepared.restarts; r++) {
      if (hooks.signal?.aborted) cancelled();
      report(runStartAlone(prepared.startInput, prepared.k, prepared.seed, r, prepared.maxIterations));
      await new Promise<void>((resolve) => setTimeout(resolve, 0));
    }
  } else {
    const units = shared(prepared.startInput.units);
    const demand = shared(prepared.startInput.demand);
    const workers: Worker[] = [];
    try {
      await Promise.all(
        Array.from({ length: threads }, (_, t) => {
          const mine: number[] = [];
          for (let r = t; r < prepared.restarts; r += threads) mine.push(r);
          const job: StartJob = { units, demand, k: prepared.k, seed: prepared.seed, maxIterations: prepared.maxIterations, restarts: mine };
          return new Promise<void>((resolve, reject) => {
            const w = startWorker(job);
            workers.push(w);
            let received = 0;
            const onAbort = (): void => {
              void w.terminate();
              reject(new SolveError('the plan run was cancelled; nothing was changed', 'cancelled'));
            };
            hooks.signal?.addEventListener('abort', onAbort, { once: true });
            w.on('message', (m: { restart?: number; outcome?: StartOutcome; error?: string }) => {
              if (m.error) {
                reject(new Error(`a start worker failed: ${m.error}`));
                return;
              }
              if (m.outcome) {
                report(m.outcome);
                received++;
                if (received === mine.length) {
                  hooks.signal?.removeEventListener('abort', onAbort);
                  void w.terminate();
                  resolve();
                }
              }
            });
            w.on('error', (e) => reject(new Error(`a start worker crashed: ${e.message}`)));
            w.on('exit', (code) => {
              if (received < mine.length) reject(new Error(`a start worker stopped early (exit code ${code})`));
            });
          });
        }),
      );
    } finally {
      for (const w of workers) void w.terminate();
    }
  }

  return drive(finishSteps(input, prepared, outcomes), { ...(hooks.onProgress ? { onProgress: hooks.onProgress } : {}), ...(hooks.signal ? { signal: hooks.signal } : {}) });
}
