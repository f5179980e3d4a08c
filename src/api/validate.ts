/**
 * The arguments of every Api method, checked before they reach the session: the same schemas
 * for Electron IPC and for the browser-mode server. Anything that does not fit is refused with
 * an ArgsError that says which argument and why.
 */
import { z } from 'zod';
import { isTileUrl } from './tile-url.js';
import { MAX_BODY_BYTES, type ApiMethod } from './wire.js';

/** Arguments that do not fit the method: a usage error, never a fault. */
export class ArgsError extends Error {
  constructor(
    readonly method: string,
    readonly issues: readonly string[],
  ) {
    super(`${method}: ${issues.join('; ')}`);
    this.name = 'ArgsError';
  }
}

const text = (max: number) => z.string().max(max).refine((s) => !s.includes('\u0000'), 'must not contain NUL characters');
const filePath = text(4096).refine((s) => s.trim().length > 0, 'must name a file');
const planName = text(200).refine((s) => s.trim().length > 0, 'must name a plan');
const fieldName = text(200);
const whole = (min: number, max: number) => z.number().int().min(min).max(max);
const stopIndex = whole(0, 2 ** 31 - 1);
const zoneLabel = whole(-(2 ** 31), 2 ** 31 - 1);
const positive = z.number().positive().max(Number.MAX_VALUE);

const stopFileOptions = z.strictObject({
  format: z.enum(['csv', 'geojson']).optional(),
  delimiter: z.enum([',', ';', '\t']).optional(),
  id: fieldName.optional(),
  lat: fieldName.optional(),
  lon: fieldName.optional(),
  demand: fieldName.nullable().optional(),
});

const importSource = z.union([
  z.strictObject({ file: filePath }),
  z.strictObject({ name: text(1000).refine((s) => s.trim().length > 0, 'must name the file'), base64: z.string().max(MAX_BODY_BYTES).regex(/^[A-Za-z0-9+/]*={0,2}$/, 'must be base64') }),
  z.strictObject({ name: text(1000).refine((s) => s.trim().length > 0, 'must name the file'), text: z.string().max(MAX_BODY_BYTES) }),
]);

const settingsShape = {
  seed: whole(0, 2 ** 32 - 1).optional(),
  restarts: whole(1, 1000).optional(),
  capacity: positive.optional(),
  balance: z.number().min(0).max(1).optional(),
  minStops: whole(0, 2 ** 31 - 1).optional(),
  maxStops: whole(1, 2 ** 31 - 1).optional(),
  depotsFile: filePath.optional(),
  depots: z.strictObject({ name: text(1000).refine((s) => s.trim().length > 0, 'must name the file'), text: z.string().max(MAX_BODY_BYTES) }).optional(),
  centre: z.enum(['arc', 'mean']).optional(),
};
const runSettings = z.strictObject({ zones: z.union([whole(1, 32_767), z.literal('auto')]), ...settingsShape });
const sweepSettings = z.strictObject(settingsShape);

const planEdit = z.discriminatedUnion('kind', [
  z.strictObject({ kind: z.literal('move'), stop: stopIndex, zone: zoneLabel }),
  z.strictObject({ kind: z.literal('lock'), stop: stopIndex }),
  z.strictObject({ kind: z.literal('unlock'), stop: stopIndex }),
  z.strictObject({ kind: z.literal('pin-centre'), zone: zoneLabel, lon: z.number().min(-180).max(180), lat: z.number().min(-90).max(90) }),
  z
    .strictObject({ kind: z.literal('unpin-centre'), zone: zoneLabel, lon: z.number().min(-180).max(180).optional(), lat: z.number().min(-90).max(90).optional() })
    .refine((e) => (e.lon === undefined) === (e.lat === undefined), 'give both lon and lat, or neither'),
]);

const budget = z.union([z.strictObject({ stops: whole(0, 2 ** 31 - 1) }), z.strictObject({ demandShare: z.number().min(0).max(1) }), z.null()]);

const exportRequest = z.strictObject({
  plan: planName,
  kind: z.enum(['plan', 'zones', 'centres', 'stops', 'assignments']),
  file: filePath.nullable(),
});

const mapSettings = z.strictObject({
  tiles: z
    .strictObject({
      url: text(2000).refine((s) => isTileUrl(s.trim()), 'must be an https URL with {z}, {x} and {y}'),
      attribution: text(500),
    })
    .nullable(),
});

const runId = text(100).refine((s) => /^[A-Za-z0-9-]+$/.test(s), 'must be a run id');
const stopSetId = whole(1, 2 ** 31 - 1);
const sweepArgs = z
  .tuple([stopSetId, whole(1, 32_767), whole(1, 32_767), sweepSettings])
  .refine(([, from, to]) => to >= from && to - from <= 100, 'the zone range must be FROM <= TO with at most 100 steps');

/** One schema per method: the whole argument list as a tuple. */
export const ARG_SCHEMAS: { readonly [M in ApiMethod]: z.ZodType<readonly unknown[]> } = {
  mode: z.tuple([]),
  project: z.tuple([]),
  newProject: z.tuple([filePath]),
  openProject: z.tuple([filePath]),
  importStops: z.union([z.tuple([importSource]), z.tuple([importSource, stopFileOptions])]),
  startRun: z.tuple([stopSetId, runSettings, planName]),
  runStatus: z.tuple([runId]),
  cancelRun: z.tuple([runId]),
  plan: z.tuple([planName]),
  planArrays: z.tuple([planName]),
  stopIds: z.tuple([planName]),
  stop: z.tuple([planName, stopIndex]),
  edit: z.tuple([planName, planEdit]),
  undo: z.tuple([planName]),
  redo: z.tuple([planName]),
  renamePlan: z.tuple([planName, planName]),
  compare: z.tuple([planName, planName]),
  changedStopFlags: z.tuple([planName, planName, planName]),
  rebalance: z.tuple([planName, stopSetId, planName, budget]),
  startRebalance: z.tuple([planName, stopSetId, planName, budget]),
  rebalanceStatus: z.tuple([runId]),
  cancelRebalance: z.tuple([runId]),
  sweep: sweepArgs,
  startSweep: sweepArgs,
  sweepStatus: z.tuple([runId]),
  cancelSweep: z.tuple([runId]),
  exportPlan: z.tuple([exportRequest]),
  mapSettings: z.tuple([]),
  saveMapSettings: z.tuple([mapSettings]),
};

function isApiMethod(name: string): name is ApiMethod {
  return Object.prototype.hasOwnProperty.call(ARG_SCHEMAS, name);
}

/** The arguments of `method` as checked data, or ArgsError naming what is wrong. */
export function validateArgs(method: string, args: unknown): readonly unknown[] {
  if (!isApiMethod(method)) throw new ArgsError(String(method).slice(0, 60), ['no such method']);
  if (!Array.isArray(args)) throw new ArgsError(method, ['the arguments must be a list']);
  const r = ARG_SCHEMAS[method].safeParse(args);
  if (r.success) return r.data;
  const issues = r.error.issues.slice(0, 10).map((i) => `${i.path.length > 0 ? `argument ${i.path.join('.')}` : 'arguments'}: ${i.message}`);
  throw new ArgsError(method, issues);
}

/**
 * The window takes no paths of files on this machine, in browser mode and over the desktop IPC
 * alike: the page has no business naming them (it sends a dropped file's bytes and gets exports
 * back as content), and a leaked page address (its token) or a page gone wrong must not let
 * anyone read or write the planner's files. The desktop's files are named by the main side's
 * own menus and dialogs, which call the session directly.
 */
export function refuseFilePaths(method: string, args: readonly unknown[]): void {
  const refuse = (what: string): never => {
    throw new ArgsError(method, [`the window takes no file paths of this machine (${what}); choose or drop the file in the window instead`]);
  };
  const has = (o: unknown, key: string): boolean => typeof o === 'object' && o !== null && key in o && (o as Record<string, unknown>)[key] != null;
  if (method === 'newProject' || method === 'openProject') refuse('a project file');
  if (method === 'importStops' && has(args[0], 'file')) refuse('a stops file');
  if (method === 'startRun' && has(args[1], 'depotsFile')) refuse('a depots file');
  if ((method === 'sweep' || method === 'startSweep') && has(args[3], 'depotsFile')) refuse('a depots file');
  if (method === 'exportPlan' && has(args[0], 'file')) refuse('an export destination');
}

