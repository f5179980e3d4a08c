/**
 * The wire protocol of browser mode: how the renderer calls the Api (src/api/app-types.ts) over
 * loopback HTTP. Types and constants only (the renderer imports this file).
 *
 *   POST /api/call/<method>      body {"args": [...]}            -> 200 WireReply (JSON)
 *   POST /api/binary/planArrays  body {"args": [planName]}       -> 200 application/octet-stream,
 *                                 the PlanArrays buffer; its other fields as JSON in the
 *                                 response header X-Zoneplan-Meta
 *   GET  /                        the app (dist/renderer/index.html); GET /<asset> its files
 *
 * Every /api request carries the run's token in the header X-Zoneplan-Token (the page learns it
 * from the ?token= of the URL the server prints). Requests without it, with a Host other than
 * the server's own 127.0.0.1 / localhost address, or with a foreign Origin are refused (401/403);
 * bodies over MAX_BODY_BYTES are refused (413).
 */
import type { InputProblem } from './types.js';
import type { Api } from './app-types.js';

export const TOKEN_HEADER = 'x-zoneplan-token';
export const META_HEADER = 'x-zoneplan-meta';
export const MAX_BODY_BYTES = 256 * 1024 * 1024;

/** What went wrong, in a form the renderer can show: bad input lists its problems. */
export interface WireError {
  readonly kind: 'input' | 'solve' | 'project' | 'write' | 'cancelled' | 'usage' | 'internal';
  readonly message: string;
  readonly problems?: readonly InputProblem[];
}

export type WireReply<T = unknown> = { readonly ok: true; readonly value: T } | { readonly ok: false; readonly error: WireError };

/** Every method of the Api, by name (the preload exposes the same list). */
export const API_METHODS = [
  'mode',
  'project',
  'newProject',
  'openProject',
  'importStops',
  'startRun',
  'runStatus',
  'cancelRun',
  'plan',
  'planArrays',
  'stopIds',
  'stop',
  'edit',
  'undo',
  'redo',
  'renamePlan',
  'compare',
  'changedStopFlags',
  'rebalance',
  'startRebalance',
  'rebalanceStatus',
  'cancelRebalance',
  'sweep',
  'startSweep',
  'sweepStatus',
  'cancelSweep',
  'exportPlan',
  'mapSettings',
  'saveMapSettings',
] as const;

export type ApiMethod = (typeof API_METHODS)[number];

// The method list and the Api interface must name the same methods (a compile-time check).
type Missing = Exclude<keyof Api, ApiMethod>;
type Extra = Exclude<ApiMethod, keyof Api>;
export const WIRE_MATCHES_API: [Missing, Extra] extends [never, never] ? true : never = true;
