/**
 * The Api (src/api/app-types.ts) over loopback HTTP, for browser mode (src/api/wire.ts):
 * POST /api/call/<method> {args} -> WireReply, and POST /api/binary/planArrays for the stop
 * arrays. The token comes from the page URL's ?token=. In the desktop window the preload's
 * window.zoneplan is used instead and this file is not involved.
 */
import type { Api, PlanArrays } from '../src/api/app-types.js';
import type { WireError, WireReply } from '../src/api/wire.js';
import { META_HEADER, TOKEN_HEADER } from '../src/api/wire.js';

/** A call that the main side refused; `wire` keeps its kind and any input problems. */
export class ApiCallError extends Error {
  readonly wire: WireError;
  constructor(method: string, wire: WireError) {
    super(wire.message || `${method} failed`);
    this.name = 'ApiCallError';
    this.wire = wire;
  }
}

export function createHttpApi(token: string, base = ''): Api {
  const headers = { 'content-type': 'application/json', [TOKEN_HEADER]: token };

  async function call<T>(method: string, args: unknown[]): Promise<T> {
    let res: Response;
    try {
      res = await fetch(`${base}/api/call/${method}`, { method: 'POST', headers, body: JSON.stringify({ args }) });
    } catch (e) {
      throw new ApiCallError(method, { kind: 'internal', message: `The local server did not answer (${String(e)}).` });
    }
    let reply: WireReply<T>;
    try {
      reply = (await res.json()) as WireReply<T>;
    } catch {
      throw new ApiCallError(method, { kind: 'internal', message: `The local server answered ${res.status} without a reply.` });
    }
    if (!reply.ok) throw new ApiCallError(method, reply.error);
    return reply.value;
  }

  async function planArrays(name: string): Promise<PlanArrays> {
    const res = await fetch(`${base}/api/binary/planArrays`, { method: 'POST', headers, body: JSON.stringify({ args: [name] }) });
    if (!res.ok) {
      let wire: WireError = { kind: 'internal', message: `planArrays: HTTP ${res.status}` };
      try {
        const reply = (await res.json()) as WireReply;
        if (!reply.ok) wire = reply.error;
      } catch {
        /* not JSON */
      }
      throw new ApiCallError('planArrays', wire);
    }
    const meta = JSON.parse(res.headers.get(META_HEADER) ?? '{}') as Omit<PlanArrays, 'buffer'>;
    const buffer = await res.arrayBuffer();
    return { ...meta, buffer };
  }

  const c =
    <K extends keyof Api>(m: K) =>
    (...args: Parameters<Api[K]>) =>
      call<Awaited<ReturnType<Api[K]>>>(m, args);

  return {
    mode: c('mode'),
    project: c('project'),
    newProject: c('newProject'),
    openProject: c('openProject'),
    importStops: c('importStops'),
    startRun: c('startRun'),
    runStatus: c('runStatus'),
    cancelRun: c('cancelRun'),
    plan: c('plan'),
    planArrays,
    stopIds: c('stopIds'),
    stop: c('stop'),
    edit: c('edit'),
    undo: c('undo'),
    redo: c('redo'),
    renamePlan: c('renamePlan'),
    compare: c('compare'),
    changedStopFlags: c('changedStopFlags'),
    rebalance: c('rebalance'),
    startRebalance: c('startRebalance'),
    rebalanceStatus: c('rebalanceStatus'),
    cancelRebalance: c('cancelRebalance'),
    sweep: c('sweep'),
    startSweep: c('startSweep'),
    sweepStatus: c('sweepStatus'),
    cancelSweep: c('cancelSweep'),
    exportPlan: c('exportPlan'),
    mapSettings: c('mapSettings'),
    saveMapSettings: c('saveMapSettings'),
  } as Api;
}

/** A readable message from any error an Api call may throw (HTTP or IPC). */
export function errorMessage(e: unknown): string {
  if (e instanceof ApiCallError) {
    // Input problems: the first few, each with its row (or feature) and field.
    const problems = (e.wire.problems ?? []).filter((p) => p.severity === 'error').slice(0, 3);
    const where = (p: (typeof problems)[number]): string =>
      [p.row !== undefined ? `row ${p.row}` : p.feature !== undefined ? `feature ${p.feature}` : '', p.field ? `field "${p.field}"` : '', p.message].filter(Boolean).join(', ');
    return problems.length > 0 ? `${e.message}: ${problems.map(where).join('; ')}` : e.message;
  }
  if (e && typeof e === 'object' && 'message' in e) return String((e as { message: unknown }).message);
  return String(e);
}
