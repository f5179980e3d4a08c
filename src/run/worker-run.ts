import { existsSync } from 'node:fs';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { Worker } from 'node:worker_threads';
import type { WireError } from '../api/wire.js';

/**
 * The worker script `name` beside the module at `here` (its import.meta.url): the bundled
 * NAME.mjs when built, NAME-dev.mjs (the TypeScript source through tsx) when running from source.
 */
export function workerBeside(here: string, name: string, workerData: unknown): Worker {
  if (here.endsWith('.ts')) return new Worker(new URL(`./${name}-dev.mjs`, here), { workerData });
  return new Worker(unpacked(fileURLToPath(new URL(`./${name}.mjs`, here))), { workerData });
}

/** In the packaged desktop app the workers are unpacked beside the app archive (electron-builder.yml). */
export function unpacked(file: string): string {
  const marker = `${path.sep}app.asar${path.sep}`;
  if (!file.includes(marker)) return file;
  const outside = file.replace(marker, `${path.sep}app.asar.unpacked${path.sep}`);
  return existsSync(outside) ? outside : file;
}

/** How a job in its worker thread ended: its value, a failure, or cancelled. */
export type WorkerOutcome<T> = { readonly state: 'done'; readonly value: T } | { readonly state: 'failed'; readonly error: WireError } | { readonly state: 'cancelled' };

export interface WorkerRunHandle<T> {
  readonly outcome: Promise<WorkerOutcome<T>>;
  /** Stops the thread at once (the job ends 'cancelled'); nothing it did is kept. */
  cancel(): Promise<void>;
}

/** What a job's worker posts: something along the way, its value at the end, or an error. */
export type WorkerMessage<T, P> = { readonly type: 'progress'; readonly progress: P } | { readonly type: 'done'; readonly value: T } | { readonly type: 'error'; readonly error: WireError };

/**
 * Runs one job in a worker thread made by `start`: progress goes to onProgress until the job ends;
 * a crash or an early exit of the thread ends it 'failed' with a message that says `what` stopped.
 */
export function runInWorker<T, P>(start: () => Worker, what: string, onProgress: (p: P) => void): WorkerRunHandle<T> {
  let settle!: (o: WorkerOutcome<T>) => void;
  let settled = false;
  const outcome = new Promise<WorkerOutcome<T>>((resolve) => (settle = resolve));
  const finish = (o: WorkerOutcome<T>): void => {
    if (settled) return;
    settled = true;
    settle(o);
  };
  let worker: Worker;
  try {
    worker = start();
  } catch (e) {
    finish({ state: 'failed', error: { kind: 'internal', message: `${what} could not start: ${e instanceof Error ? e.message : String(e)}` } });
    return { outcome, cancel: async () => {} };
  }
  worker.on('message', (m: WorkerMessage<T, P>) => {
    if (settled) return;
    if (m.type === 'progress') onProgress(m.progress);
    else if (m.type === 'done') finish({ state: 'done', value: m.value });
    else if (m.type === 'error') finish(m.error.kind === 'cancelled' ? { state: 'cancelled' } : { state: 'failed', error: m.error });
  });
  worker.on('error', (e) => finish({ state: 'failed', error: { kind: 'internal', message: `${what} stopped with an error: ${e.message}` } }));
  worker.on('exit', (code) => finish({ state: 'failed', error: { kind: 'internal', message: `${what} stopped unexpectedly (exit code ${code})` } }));
  return {
    outcome,
    cancel: async () => {
      finish({ state: 'cancelled' });
      await worker.terminate();
    },
  };
}
