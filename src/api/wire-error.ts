/**
 * Errors as the map window is shown them (WireError): bad input with its problems, a solve that
 * cannot be done, a project or write problem, a cancelled run, a usage error; anything else is an
 * internal fault, reported without its stack trace.
 */
import { ImportError } from '../io/problems.js';
import { WriteError } from '../io/atomic.js';
import { SolveError } from '../solve/types.js';
import { ProjectError } from '../store/errors.js';
import { ArgsError } from './validate.js';
import type { WireError } from './wire.js';

/** An error the session raises itself, already in the map window's terms. */
export class AppError extends Error {
  constructor(
    readonly kind: WireError['kind'],
    message: string,
  ) {
    super(message);
    this.name = 'AppError';
  }
}

export function toWireError(e: unknown): WireError {
  if (e instanceof ImportError) return { kind: 'input', message: e.message.split('\n')[0]!, problems: e.problems.map((p) => ({ ...p })) };
  if (e instanceof ArgsError) return { kind: 'usage', message: e.message };
  if (e instanceof AppError) return { kind: e.kind, message: e.message };
  if (e instanceof SolveError) return { kind: e.code === 'cancelled' ? 'cancelled' : 'solve', message: e.message };
  if (e instanceof ProjectError) return { kind: 'project', message: e.message };
  if (e instanceof WriteError) return { kind: 'write', message: e.message };
  return { kind: 'internal', message: 'internal error in Zoneplan (not in your input); the details are in the log of the app' };
}
