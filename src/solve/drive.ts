import { SolveError, type SolveProgress } from './types.js';

export interface DriveHooks {
  onProgress?: (p: SolveProgress) => void;
  signal?: AbortSignal;
  /** Longest stretch of computation between two yields to the event loop, ms (default 50). */
  sliceMs?: number;
}

/**
 * Runs a solve generator to its end with progress reports and cancellation: between steps it
 * gives the event loop a turn at least every `sliceMs`, so that an abort (a Cancel button, a
 * worker message) is seen within one step. A cancelled run throws a SolveError 'cancelled'.
 */
export async function drive<T>(steps: Generator<SolveProgress, T, void>, hooks: DriveHooks = {}): Promise<T> {
  const slice = hooks.sliceMs ?? 50;
  const cancelled = (): never => {
    steps.return(undefined as never);
    throw new SolveError('the plan run was cancelled; nothing was changed', 'cancelled');
  };
  if (hooks.signal?.aborted) cancelled();
  let last = performance.now();
  for (;;) {
    const r = steps.next();
    if (r.done) return r.value;
    hooks.onProgress?.(r.value);
    if (performance.now() - last >= slice) {
      await new Promise<void>((resolve) => setTimeout(resolve, 0));
      last = performance.now();
    }
    if (hooks.signal?.aborted) cancelled();
  }
}
