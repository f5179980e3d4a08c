import { randomUUID } from 'node:crypto';
import type { StopSet } from '../io/stopset.js';
import { startSweepRun, type SweepRunHandle, type SweepWorkerFactory } from '../run/sweep-run.js';
import type { WireError } from './wire.js';
import type { SweepStatus } from './app-types.js';
import type { PlanSettingsInput, SweepRow } from './types.js';
import { AppError } from './wire-error.js';

interface SweepRecord {
  readonly status: { -readonly [K in keyof SweepStatus]: SweepStatus[K] } & { rows: SweepRow[] };
  readonly run: SweepRunHandle;
  /** Settles when the sweep has ended, with its error when it failed. */
  readonly ended: Promise<WireError | null>;
}

/** A copy of a status (the rows as they are now). */
function copyOf(s: SweepRecord['status']): SweepStatus {
  return { ...s, rows: [...s.rows] };
}

/**
 * The sweeps of one window, each in its own worker thread: rows arrive one by one as each number
 * of zones is done, and a cancelled sweep stops at once, keeping only the rows that were whole.
 */
export class SweepRuns {
  private readonly sweeps = new Map<string, SweepRecord>();

  constructor(private readonly factory?: SweepWorkerFactory) {}

  /**
   * Starts a sweep over [from, to]; `onChange` hears every new row and every whole per cent.
   * `cleanup` runs once the sweep has ended (it removes what the settings needed, such as a
   * temporary depots file).
   */
  start(stops: StopSet, settings: Omit<PlanSettingsInput, 'zones'>, from: number, to: number, cleanup: () => void, onChange?: (s: SweepStatus) => void): SweepStatus {
    const id = randomUUID();
    const status: SweepRecord['status'] = { id, state: 'running', fraction: 0, from, to, rows: [], message: null };
    const tell = (): void => onChange?.(copyOf(status));
    const run = startSweepRun(
      { stops, settings, range: { from, to } },
      (row) => {
        if (status.state !== 'running') return;
        status.rows.push(row);
        status.fraction = Math.max(status.fraction, status.rows.length / (to - from + 1));
        tell();
      },
      (fraction) => {
        if (status.state !== 'running' || fraction <= status.fraction) return;
        status.fraction = fraction;
        tell();
      },
      this.factory,
    );
    const ended = run.outcome.finally(cleanup).then((o): WireError | null => {
      if (status.state !== 'running') return null;
      const count = `${status.rows.length} of ${to - from + 1} zone counts`;
      if (o.state === 'cancelled') Object.assign(status, { state: 'cancelled', message: `the sweep was cancelled after ${count}; nothing was saved` });
      else if (o.state === 'failed') Object.assign(status, { state: 'failed', message: o.error.message });
      else Object.assign(status, { state: 'done', fraction: 1 });
      tell();
      return o.state === 'failed' ? o.error : null;
    });
    this.sweeps.set(id, { status, run, ended });
    return copyOf(status);
  }

  private of(id: string): SweepRecord {
    const r = this.sweeps.get(id);
    if (!r) throw new AppError('usage', `no sweep ${id} in this window`);
    return r;
  }

  status(id: string): SweepStatus {
    return copyOf(this.of(id).status);
  }

  /** Stops a sweep under way (its thread is ended at once); the rows already done stay. */
  async cancel(id: string): Promise<SweepStatus> {
    const r = this.of(id);
    if (r.status.state === 'running') {
      await r.run.cancel();
      await r.ended;
    }
    return copyOf(r.status);
  }

  /** Waits until a sweep has ended. */
  async wait(id: string): Promise<SweepStatus> {
    const r = this.of(id);
    await r.ended;
    return copyOf(r.status);
  }

  /** The rows of a sweep once it is done; its error (or that it was cancelled) otherwise. */
  async rows(id: string): Promise<SweepRow[]> {
    const r = this.of(id);
    const error = await r.ended;
    if (r.status.state === 'done') return [...r.status.rows];
    if (error) throw new AppError(error.kind, error.message);
    throw new AppError('cancelled', r.status.message ?? 'the sweep was cancelled');
  }

  async cancelAll(): Promise<void> {
    await Promise.all([...this.sweeps.values()].filter((r) => r.status.state === 'running').map((r) => this.cancel(r.status.id)));
  }
}
