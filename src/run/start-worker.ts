/**
 * Worker thread entry: runs k-means++ starts of a solve and posts each outcome back.
 * Message in: StartJob. Messages out: { restart, outcome } per start, or { error }.
 */
import { parentPort, workerData } from 'node:worker_threads';
import { runStartAlone } from '../solve/kmeans.js';
import type { StartJob } from './parallel-solve.js';

const job = workerData as StartJob;
const input = { units: new Float64Array(job.units), demand: new Float64Array(job.demand) };
try {
  for (const restart of job.restarts) {
    const outcome = runStartAlone(input, job.k, job.seed, restart, job.maxIterations);
    parentPort!.postMessage({ restart, outcome }, [outcome.result.centres.buffer, outcome.result.assignment.buffer] as ArrayBuffer[]);
  }
} catch (e) {
  parentPort!.postMessage({ error: e instanceof Error ? `${e.name}: ${e.message}` : String(e) });
}
