import path from 'node:path';
import { Command, CommanderError, InvalidArgumentError, Option } from 'commander';
import { checkStopsFile, planStopsFile } from '../api/plan-file.js';
import { sweepStopsFile } from '../api/sweep.js';
import { writeFileAtomic } from '../io/atomic.js';
import { readServiceAreaFile } from '../io/zone-files.js';
import type { StopFileOptions, PlanSettingsInput } from '../api/types.js';
import { ImportError, formatProblem } from '../io/problems.js';
import { WriteError } from '../io/atomic.js';
import { SolveError } from '../solve/types.js';
import { checkPlanCanBeSaved, createProject, importStopsToProject, listPlans, loadEditedPlan, planStopsFileToProject, savePlanToProject } from '../api/project.js';
import { resultOfPlan, writePlanFiles, writePlanLayers, type SolvedPlan } from '../api/plan-file.js';
import { comparePlans, rebalancePlan } from '../api/rebalance.js';
import { readPlanFile } from '../io/plan-reader.js';
import { readStopsFile } from '../io/read.js';
import { planFigures } from '../zones/stats.js';
import { mkdirSync } from 'node:fs';
import type { ProjectPlanRow } from '../api/types.js';
import { ProjectError } from '../store/errors.js';
import { addServeCommand } from './serve-command.js';
import { planText, problemLine, fixed, amount, sweepText, sweepCsv, comparisonText, rebalanceText } from './format.js';

/** Exit codes: 0 done; 2 the user must change something (input, options, destination); 1 internal fault. */
export const EXIT_OK = 0;
export const EXIT_FAULT = 1;
export const EXIT_USAGE = 2;

export interface CliIo {
  readonly out: (s: string) => void;
  readonly err: (s: string) => void;
  readonly isTty: boolean;
}

const defaultIo: CliIo = {
  out: (s) => process.stdout.write(s),
  err: (s) => process.stderr.write(s),
  isTty: Boolean(process.stderr.isTTY),
};

function wholeNumber(min: number, what: string) {
  return (v: string): number => {
    if (!/^\d+$/.test(v.trim())) throw new InvalidArgumentError(`${what} must be a whole number, got "${v}"`);
    const n = Number(v);
    if (n < min) throw new InvalidArgumentError(`${what} must be at least ${min}, got ${n}`);
    return n;
  };
}

function zonesOption(v: string): number | 'auto' {
  if (v.trim().toLowerCase() === 'auto') return 'auto';
  return wholeNumber(1, 'zones')(v);
}

function positiveNumber(what: string) {
  return (v: string): number => {
    const n = Number(v.trim());
    if (!/^\d+(\.\d+)?([eE][+-]?\d+)?$/.test(v.trim()) || !Number.isFinite(n)) throw new InvalidArgumentError(`${what} must be a number >= 0, got "${v}"`);
    return n;
  };
}

/**
 * --margin-km: a number above 0. A margin of 0 would make the service area the bare hull, with
 * stops on its edge (zoneBoundaries refuses it), so it is refused here, like a negative one.
 */
function marginKmOption(v: string): number {
  const n = positiveNumber('margin-km')(v);
  if (!(n > 0)) throw new InvalidArgumentError(`margin-km must be a number above 0 (km around the hull of the stops), got "${v}"`);
  return n;
}

/** "5%" or "0.05" -> 0.05. */
function fractionOption(v: string): number {
  const s = v.trim();
  const pct = s.endsWith('%');
  const n = Number(pct ? s.slice(0, -1) : s);
  if (!Number.isFinite(n) || n < 0) throw new InvalidArgumentError(`balance must be a fraction like 0.05 or a percentage like 5%, got "${v}"`);
  const f = pct ? n / 100 : n;
  if (f >= 1) throw new InvalidArgumentError(`balance must be below 100% (0.05 = within 5% of the mean zone demand), got "${v}"`);
  return f;
}

/** "5..40" -> {from: 5, to: 40}. */
function rangeOption(v: string): { from: number; to: number } {
  const m = /^\s*(\d+)\s*(?:\.\.|-)\s*(\d+)\s*$/.exec(v);
  if (!m) throw new InvalidArgumentError(`zones must be a range FROM..TO, e.g. 5..40, got "${v}"`);
  const from = Number(m[1]);
  const to = Number(m[2]);
  if (from < 1 || to < from) throw new InvalidArgumentError(`zones range needs 1 <= FROM <= TO, got "${v}"`);
  return { from, to };
}

function addLimitOptions(cmd: Command): Command {
  return cmd
    .option('--capacity <Q>', 'no zone may carry more demand than Q (workload units)', positiveNumber('capacity'))
    .option('--capacity-file <file>', 'CSV of zone (number or depot id), capacity: per-zone capacities')
    .option('--balance <t>', 'every zone within +-t of the mean zone demand, e.g. 5% or 0.05', fractionOption)
    .option('--min-stops <n>', 'at least n stops per zone', wholeNumber(0, 'min-stops'))
    .option('--max-stops <n>', 'at most n stops per zone', wholeNumber(1, 'max-stops'))
    .option('--depots <file>', 'fixed depots (CSV or GeoJSON: id, lat, lon, optional capacity): the first zones, centres stay there')
    .option('--locks <file>', 'CSV of stop id, zone (number or depot id): stops that must stay in that zone');
}

function limitSettings(o: Record<string, unknown>): Partial<PlanSettingsInput> {
  const s: { -readonly [K in keyof PlanSettingsInput]?: PlanSettingsInput[K] } = {};
  if (o.capacity !== undefined) s.capacity = o.capacity as number;
  if (typeof o.capacityFile === 'string') s.capacityFile = o.capacityFile;
  if (o.balance !== undefined) s.balance = o.balance as number;
  if (o.minStops !== undefined) s.minStops = o.minStops as number;
  if (o.maxStops !== undefined) s.maxStops = o.maxStops as number;
  if (typeof o.depots === 'string') s.depotsFile = o.depots;
  if (typeof o.locks === 'string') s.locksFile = o.locks;
  return s;
}

function delimiterOption(v: string): ',' | ';' | '\t' {
  const map: Record<string, ',' | ';' | '\t'> = { ',': ',', comma: ',', ';': ';', semicolon: ';', '\t': '\t', tab: '\t', '\\t': '\t' };
  const d = map[v.toLowerCase()];
  if (!d) throw new InvalidArgumentError(`delimiter must be comma, semicolon or tab, got "${v}"`);
  return d;
}

function addReadOptions(cmd: Command): Command {
  return cmd
    .addOption(new Option('--format <format>', 'input format (default: by file extension)').choices(['csv', 'geojson']))
    .option('--lat <name>', 'latitude column or property (default: lat, latitude, y, ...)')
    .option('--lon <name>', 'longitude column or property (default: lon, lng, long, longitude, x, ...)')
    .option('--id <name>', 'stop id column or property (default: id, stop_id, name, ...; else the row number)')
    .option('--demand <name>', 'workload column or property (default: demand, weight, workload, ...; else 1 per stop)')
    .option('--delimiter <d>', 'CSV delimiter: comma, semicolon or tab (default: detected from the header)', delimiterOption);
}

function readOptions(o: Record<string, unknown>): StopFileOptions {
  const r: { -readonly [K in keyof StopFileOptions]: StopFileOptions[K] } = {};
  if (o.format) r.format = o.format as 'csv' | 'geojson';
  if (typeof o.lat === 'string') r.lat = o.lat;
  if (typeof o.lon === 'string') r.lon = o.lon;
  if (typeof o.id === 'string') r.id = o.id;
  if (typeof o.demand === 'string') r.demand = o.demand;
  if (o.delimiter) r.delimiter = o.delimiter as ',' | ';' | '\t';
  return r;
}

/** Runs the command line; returns the exit code instead of exiting, so that it can be tested. */
export async function main(argv: readonly string[], io: CliIo = defaultIo): Promise<number> {
  const program = new Command();
  let code = EXIT_OK;
  program
    .name('zoneplan')
    .description('Cut a region of stops into K compact service zones with fair workloads (great-circle k-means).')
    .exitOverride()
    .configureOutput({ writeOut: io.out, writeErr: io.err })
    .showHelpAfterError('(run with --help for the options)');

  addReadOptions(
    program
      .command('check')
      .description('validate a stops file (CSV or GeoJSON) and report what would be imported')
      .argument('<input>', 'stops file: CSV with a header, or GeoJSON FeatureCollection of Points'),
  )
    .option('--json', 'print the report as JSON on stdout')
    .action(async (input: string, o: Record<string, unknown>) => {
      const report = await checkStopsFile(input, readOptions(o));
      if (o.json) io.out(`${JSON.stringify(report, null, 2)}\n`);
      else {
        for (const w of report.warnings) io.err(`${problemLine(w)}\n`);
        const [w, s, e, n] = report.bbox;
        io.out(
          `${report.file}: ${report.stops} stops, demand ${amount(report.totalDemand)}, ${report.format}` +
            ` (id: ${report.fields.id ?? 'row number'}, lat: ${report.fields.lat}, lon: ${report.fields.lon}, demand: ${report.fields.demand ?? '1 per stop'})\n` +
            `extent: longitude ${fixed(w, 4)} to ${fixed(e, 4)}, latitude ${fixed(s, 4)} to ${fixed(n, 4)}\n` +
            `${report.warnings.length === 0 ? 'no problems found' : `${report.warnings.length} warning${report.warnings.length === 1 ? '' : 's'} (see above); the file can be imported`}\n`,
        );
      }
    });

  const planCommand = addReadOptions(
    program
      .command('plan')
      .description('plan K zones for a stops file; print per-zone figures; optionally write the plan')
      .argument('<input>', 'stops file: CSV with a header, or GeoJSON FeatureCollection of Points'),
  )
    .requiredOption('-k, --zones <K>', "number of zones (vans, depots, technicians), or 'auto' with --capacity: the fewest that carry the demand", zonesOption)
    .option('--seed <n>', 'seed of the random starts: same input, settings and seed give the same plan (default 1)', wholeNumber(0, 'seed'))
    .option('--restarts <n>', 'k-means++ starts; the best is kept (default 4)', wholeNumber(1, 'restarts'))
    .option('--max-iterations <n>', 'iteration cap; a plan that reaches it is reported as not converged (default 500)', wholeNumber(1, 'max-iterations'))
    .addOption(new Option('--centre <rule>', 'arc: centres minimise squared great-circle km (default); mean: normalised vector mean').choices(['arc', 'mean']))
    .option('--sample <n>', 'compare the starts on a sample of this many stops when there are over twice as many (0: never; default max(100000, 250 x zones))', wholeNumber(0, 'sample'))
    .option('--threads <n>', 'worker threads for the starts (default up to 2); the plan does not depend on it', wholeNumber(1, 'threads'))
    .option('-o, --out <file>', 'write the plan as GeoJSON (RFC 7946): stops and zone centres')
    .option('--assignments <file>', 'write stop assignments as CSV: stop_id, zone, km_to_centre, demand')
    .option('--json', 'print the plan report as JSON on stdout')
    .option('--quiet', 'no progress line on stderr')
    .option('--margin-km <km>', 'zone polygons cover the hull of the stops plus this margin, above 0 (default 2)', marginKmOption)
    .option('--service-area <file>', 'GeoJSON Polygon/MultiPolygon the zone polygons partition (instead of the hull plus margin)')
    .option('--no-boundaries', 'write no zone polygons');
  planCommand
    .option('--project <file>', 'also save the plan as a new version in this project file (.zoneplan; see zoneplan project new)')
    .option('--name <name>', 'the name of the saved plan (with --project); names are unique in a project')
    .option('--parent <name>', 'the saved plan this one was made from, e.g. a rebalance (with --project)');
  addLimitOptions(planCommand).action(async (input: string, o: Record<string, unknown>) => {
      const project = projectTarget(planCommand, o);
      const settings: { -readonly [K in keyof PlanSettingsInput]: PlanSettingsInput[K] } = { zones: o.zones as number | 'auto', ...limitSettings(o) };
      if (o.seed !== undefined) settings.seed = o.seed as number;
      if (o.restarts !== undefined) settings.restarts = o.restarts as number;
      if (o.maxIterations !== undefined) settings.maxIterations = o.maxIterations as number;
      if (o.centre !== undefined) settings.centre = o.centre as 'arc' | 'mean';
      if (o.sample !== undefined) settings.sampleStops = o.sample as number;
      if (o.threads !== undefined) settings.threads = o.threads as number;
      const showProgress = io.isTty && !o.quiet && !o.json;
      let lastDraw = 0;
      const { report, saved } = await planMaybeSaving(
        project,
        input,
        readOptions(o),
        settings,
        { ...(typeof o.out === 'string' ? { geojson: o.out } : {}), ...(typeof o.assignments === 'string' ? { assignments: o.assignments } : {}) },
        {
          onProgress: (p) => {
            if (!showProgress) return;
            const now = Date.now();
            if (now - lastDraw < 100 && p.phase !== 'done') return;
            lastDraw = now;
            const width = 30;
            const filled = Math.round(p.fraction * width);
            io.err(`\r[${'#'.repeat(filled)}${'.'.repeat(width - filled)}] ${String(Math.round(p.fraction * 100)).padStart(3)}% ${p.phase}   `);
          },
        },
        {
          ...(o.boundaries === false ? { boundaries: false } : {}),
          ...(o.marginKm !== undefined ? { marginKm: o.marginKm as number } : {}),
          ...(typeof o.serviceArea === 'string' ? { serviceArea: readServiceAreaFile(o.serviceArea) } : {}),
        },
      );
      if (showProgress) io.err('\r\x1b[K');
      for (const note of report.notes) io.err(`note: ${note}\n`);
      for (const w of report.input.warnings) io.err(`${problemLine(w)}\n`);
      if (!report.converged) io.err(`warning: the plan did not converge within the iteration cap; raise --max-iterations for a settled plan\n`);
      for (const note of report.limits?.notes ?? []) io.err(`note: ${note}\n`);
      if (report.limits && !report.limits.feasible) {
        io.err(`warning: ${report.limits.breaches.length} zone bound${report.limits.breaches.length === 1 ? '' : 's'} could not be met (see the limits lines); the plan was still written\n`);
      }
      io.out(o.json ? `${JSON.stringify(report, null, 2)}\n` : `${planText(report)}\n`);
      if (saved) (o.json ? io.err : io.out)(`saved as plan ${saved.name} in ${project!.file}\n`);
    });

  const sweepCommand = addReadOptions(
    program
      .command('sweep')
      .description('plan every number of zones in a range and report objective and workload spread per K (how many zones?)')
      .argument('<input>', 'stops file: CSV with a header, or GeoJSON FeatureCollection of Points'),
  )
    .requiredOption('-k, --zones <FROM..TO>', 'range of zone counts, e.g. 5..40', rangeOption)
    .option('--step <n>', 'every n-th zone count (default 1)', wholeNumber(1, 'step'))
    .option('--seed <n>', 'seed of the random starts (default 1)', wholeNumber(0, 'seed'))
    .option('--restarts <n>', 'k-means++ starts per zone count (default 2)', wholeNumber(1, 'restarts'))
    .option('--csv <file>', 'also write the rows as CSV')
    .option('--json', 'print the report as JSON on stdout');
  addLimitOptions(sweepCommand).action(async (input: string, o: Record<string, unknown>) => {
    const range = o.zones as { from: number; to: number };
    const settings = {
      restarts: (o.restarts as number | undefined) ?? 2,
      ...(o.seed !== undefined ? { seed: o.seed as number } : {}),
      ...limitSettings(o),
    };
    const report = await sweepStopsFile(input, readOptions(o), settings, { ...range, ...(o.step !== undefined ? { step: o.step as number } : {}) }, {
      onRow: (r) => {
        if (!o.json && io.isTty) io.err(`  K=${r.zones} done\n`);
      },
    });
    if (typeof o.csv === 'string') writeFileAtomic(o.csv, sweepCsv(report.rows));
    if (o.json) io.out(`${JSON.stringify(report, null, 2)}\n`);
    else io.out(`${sweepText(report)}\n`);
  });

  addProjectCommands(program, io);
  addServeCommand(program, io);

  try {
    await program.parseAsync(argv as string[], { from: 'user' });
  } catch (e) {
    code = reportFailure(e, io);
  }
  return code;
}

function reportFailure(e: unknown, io: CliIo): number {
  if (e instanceof CommanderError) {
    if (e.code === 'commander.helpDisplayed' || e.code === 'commander.version' || e.code === 'commander.help') return EXIT_OK;
    return EXIT_USAGE; // commander has printed the message
  }
  if (e instanceof ImportError) {
    io.err(`${e.problems.map(formatProblem).join('\n')}\n`);
    const more = e.errorCount - e.problems.length;
    if (more > 0) io.err(`... and ${more} more error${more === 1 ? '' : 's'}\n`);
    io.err(`${e.file}: ${e.errorCount} error${e.errorCount === 1 ? '' : 's'}; nothing was imported or written\n`);
    return EXIT_USAGE;
  }
  if (e instanceof SolveError) {
    io.err(`error: ${e.message}\n`);
    return e.code === 'cancelled' ? EXIT_FAULT : EXIT_USAGE;
  }
  if (e instanceof WriteError) {
    io.err(`error: ${e.message}\n`);
    return EXIT_USAGE;
  }
  if (e instanceof ProjectError) {
    io.err(`error: ${e.message}\n`);
    return EXIT_USAGE;
  }
  io.err(`internal error: ${e instanceof Error ? e.message : String(e)}\n`);
  if (process.env.ZONEPLAN_DEBUG && e instanceof Error && e.stack) io.err(`${e.stack}\n`);
  else io.err('this is a fault in Zoneplan, not in your input; run with ZONEPLAN_DEBUG=1 for details\n');
  return EXIT_FAULT;
}

// ---- projects (.zoneplan files): project new / import, plans, export, plan --project

/** --project and --name of `plan`, checked together. */
function projectTarget(cmd: Command, o: Record<string, unknown>): { file: string; name: string; parent?: string } | null {
  const file = typeof o.project === 'string' ? o.project : null;
  const name = typeof o.name === 'string' ? o.name : null;
  if (file === null && name === null && o.parent === undefined) return null;
  if (file === null) cmd.error(`error: --${name !== null ? 'name' : 'parent'} needs --project FILE (the project to save the plan in)`, { exitCode: EXIT_USAGE });
  if (name === null || name.trim() === '') cmd.error('error: --project needs --name NAME (the name of the saved plan, e.g. "week 12")', { exitCode: EXIT_USAGE });
  return { file, name, ...(typeof o.parent === 'string' ? { parent: o.parent } : {}) };
}

/** planStopsFile, or planStopsFileToProject when the plan is to be saved in a project. */
async function planMaybeSaving(
  project: { file: string; name: string; parent?: string } | null,
  ...args: Parameters<typeof planStopsFile>
): Promise<{ report: Awaited<ReturnType<typeof planStopsFile>>; saved: ProjectPlanRow | null }> {
  if (!project) return { report: await planStopsFile(...args), saved: null };
  const [input, read, settings, out, hooks, boundaries] = args;
  return planStopsFileToProject(input, read, settings, out ?? {}, project, hooks, boundaries);
}

/** Text table, text columns left-aligned and number columns right-aligned. */
function plansTable(rows: readonly ProjectPlanRow[]): string {
  const header = ['name', 'saved (UTC)', 'stops', 'zones', 'objective km²', 'parent', 'edits', 'settings'];
  const right = new Set([2, 3, 4, 6]);
  const cells = rows.map((r) => [
    r.name,
    r.created.slice(0, 16).replace('T', ' '),
    String(r.stops),
    String(r.zones),
    r.objectiveKm2.toExponential(4),
    r.parent ?? '-',
    String(r.edits),
    `${r.settings}${r.feasible === false ? ' (limits not met)' : ''}`,
  ]);
  const widths = header.map((h, c) => Math.max(h.length, ...cells.map((row) => row[c]!.length)));
  const line = (row: readonly string[]): string =>
    row
      .map((v, c) => (c === row.length - 1 ? v : right.has(c) ? v.padStart(widths[c]!) : v.padEnd(widths[c]!)))
      .join('  ')
      .trimEnd();
  return [line(header), line(widths.map((w) => '-'.repeat(w))), ...cells.map(line)].join('\n');
}

/** "120" -> 120 stops; "5%" -> 5% of demand. */
function budgetOption(v: string): { stops: number } | { demandShare: number } {
  const s = v.trim();
  if (s.endsWith('%')) {
    const p = Number(s.slice(0, -1));
    if (!Number.isFinite(p) || p < 0 || p > 100) throw new InvalidArgumentError(`max-moved must be a number of stops or a percentage from 0% to 100%, got "${v}"`);
    return { demandShare: p / 100 };
  }
  if (!/^\d+$/.test(s)) throw new InvalidArgumentError(`max-moved must be a whole number of stops or a percentage like 5%, got "${v}"`);
  return { stops: Number(s) };
}

function zoneListOption(v: string): number[] {
  const parts = v.split(',').map((x) => x.trim()).filter(Boolean);
  if (parts.length === 0 || parts.some((x) => !/^\d+$/.test(x))) throw new InvalidArgumentError(`remove-zones must list zone numbers, e.g. 3,7, got "${v}"`);
  return parts.map(Number);
}

function boundaryOptions(o: Record<string, unknown>): { boundaries?: boolean; marginKm?: number; serviceArea?: ReturnType<typeof readServiceAreaFile> } {
  return {
    ...(o.boundaries === false ? { boundaries: false } : {}),
    ...(o.marginKm !== undefined ? { marginKm: o.marginKm as number } : {}),
    ...(typeof o.serviceArea === 'string' ? { serviceArea: readServiceAreaFile(o.serviceArea) } : {}),
  };
}

function addProjectCommands(program: Command, io: CliIo): void {
  const project = program.command('project').description('project files (.zoneplan): stop sets, saved plans and manual edits in one SQLite file');
  project
    .command('new')
    .description('make a new, empty project file (an existing file is never overwritten)')
    .argument('<file>', 'the project file to make, e.g. tallowmere.zoneplan')
    .action(async (file: string) => {
      const info = await createProject(file);
      if (path.extname(file).toLowerCase() !== '.zoneplan') io.err(`note: ${file} does not end in .zoneplan; the desktop app opens projects by that extension\n`);
      io.out(`created project ${info.file} (project format ${info.formatVersion})\n`);
    });
  addReadOptions(
    project
      .command('import')
      .description('import a stops file into a project as a new stop set (with its warnings)')
      .argument('<file>', 'the project file')
      .argument('<stops>', 'stops file: CSV with a header, or GeoJSON FeatureCollection of Points'),
  ).action(async (file: string, stops: string, o: Record<string, unknown>) => {
    const s = await importStopsToProject(file, stops, readOptions(o));
    for (const w of s.warnings) io.err(`${problemLine(w)}\n`);
    io.out(`imported ${s.stops} stops from ${s.source} into ${file} as stop set ${s.id}\n`);
  });

  program
    .command('plans')
    .description('list the plans saved in a project')
    .argument('<file>', 'the project file')
    .option('--json', 'print the list as JSON on stdout')
    .action(async (file: string, o: Record<string, unknown>) => {
      const rows = await listPlans(file);
      if (o.json) io.out(`${JSON.stringify(rows, null, 2)}\n`);
      else if (rows.length === 0) io.out(`${file} has no plans yet; save one with: zoneplan plan STOPS --zones K --project ${file} --name NAME\n`);
      else io.out(`${plansTable(rows)}\n`);
    });

  program
    .command('export')
    .description('write a plan (saved in a project, with its manual edits; or a plan GeoJSON file) as GeoJSON, separate layers and/or an assignments CSV')
    .argument('<file>', 'a project file (with --plan), or a plan GeoJSON file written by zoneplan plan --out')
    .option('--plan <name>', 'the saved plan to export (see zoneplan plans FILE)')
    .option('-o, --out <file>', 'write the plan as one GeoJSON (RFC 7946): zones, centres and stops')
    .option('--layers <dir>', 'write zones.geojson, centres.geojson, stops.geojson and assignments.csv into a folder')
    .option('--assignments <file>', 'write stop assignments as CSV: stop_id, zone, km_to_centre, demand')
    .option('--margin-km <km>', 'zone polygons cover the hull of the stops plus this margin, above 0 (default 2)', marginKmOption)
    .option('--service-area <file>', 'GeoJSON Polygon/MultiPolygon the zone polygons partition (instead of the hull plus margin)')
    .option('--no-boundaries', 'write no zone polygons')
    .action(async (file: string, o: Record<string, unknown>, cmd: Command) => {
      const out = { ...(typeof o.out === 'string' ? { geojson: o.out } : {}), ...(typeof o.assignments === 'string' ? { assignments: o.assignments } : {}) };
      const layers = typeof o.layers === 'string' ? o.layers : null;
      if (!out.geojson && !out.assignments && !layers) cmd.error('error: nothing to export: give --out FILE.geojson, --layers DIR and/or --assignments FILE.csv', { exitCode: EXIT_USAGE });
      const bounds = boundaryOptions(o);
      const isProject = path.extname(file).toLowerCase() === '.zoneplan' || typeof o.plan === 'string';
      let solved: SolvedPlan;
      let label: string;
      if (isProject) {
        if (typeof o.plan !== 'string') cmd.error('error: a project holds many plans: name one with --plan NAME (see zoneplan plans FILE)', { exitCode: EXIT_USAGE });
        solved = await loadEditedPlan(file, o.plan as string);
        label = `plan ${o.plan as string}`;
      } else {
        const read = readPlanFile(file);
        solved = { stops: read.stops, plan: read.plan, result: resultOfPlan(read.plan), figures: planFigures(read.stops.units, read.stops.demand, read.plan.centres, read.plan.assignment) };
        label = `the plan in ${file}`;
      }
      const notes = writePlanFiles(solved, out, bounds);
      const written = [out.geojson, out.assignments].filter(Boolean) as string[];
      if (layers) {
        mkdirSync(layers, { recursive: true });
        const r = writePlanLayers(solved, layers, bounds);
        written.push(...r.files);
        notes.push(...r.notes.filter((n) => !notes.includes(n)));
      }
      for (const note of notes) io.err(`note: ${note}\n`);
      io.out(`wrote ${label} (${solved.stops.ids.length} stops, ${solved.plan.zoneIds.length} zones): ${written.join(', ')}\n`);
    });

  program
    .command('compare')
    .description('compare two saved plans: stops that changed zone, workload per zone before and after, objectives')
    .argument('<file>', 'the project file')
    .argument('<planA>', 'the plan before')
    .argument('<planB>', 'the plan after')
    .option('--json', 'print the comparison as JSON on stdout')
    .option('--list <n>', 'list at most n changed stops (default 20)', wholeNumber(0, 'list'))
    .action(async (file: string, a: string, b: string, o: Record<string, unknown>) => {
      const pa = await loadEditedPlan(file, a);
      const pb = await loadEditedPlan(file, b);
      const c = comparePlans(pa, pb);
      if (o.json) io.out(`${JSON.stringify(c, null, 2)}\n`);
      else io.out(`${comparisonText(c, a, b, (o.list as number | undefined) ?? 20)}\n`);
    });

  addReadOptions(
    program
      .command('rebalance')
      .description('rebalance a saved plan for a new stop set (demand changed, stops added or gone) with as few stops changing zone as the limits allow; saves it as a new version')
      .argument('<file>', 'the project file'),
  )
    .requiredOption('--plan <name>', 'the saved plan to start from')
    .requiredOption('--stops <file>', 'the new stops (CSV or GeoJSON; stops matched by id)')
    .requiredOption('--name <name>', 'name of the new plan version')
    .option('--max-moved <n|p%>', 'hard budget: at most n stops, or p% of the demand, change zone', budgetOption)
    .option('--move-cost <km2>', 'cost per unit of demand moved, in km² (default: a tenth of the old plan\'s mean squared km per unit of demand; 0: the budget alone holds stops)', positiveNumber('move-cost'))
    .option('--add-zones <n>', 'add n zones (new vans)', wholeNumber(0, 'add-zones'))
    .option('--remove-zones <list>', 'remove zones by label, e.g. 3,7 (a depot closes): their stops move', zoneListOption)
    .option('--capacity <Q>', 'new capacity for every zone (default: the plan\'s limits)', positiveNumber('capacity'))
    .option('--balance <t>', 'new balance band, e.g. 5% (default: the plan\'s limits)', fractionOption)
    .option('-o, --out <file>', 'also write the new plan as GeoJSON')
    .option('--json', 'print the report as JSON on stdout')
    .action(async (file: string, o: Record<string, unknown>) => {
      const old = await loadEditedPlan(file, o.plan as string);
      const stops = readStopsFile(o.stops as string, readOptions(o));
      const limits =
        o.capacity !== undefined || o.balance !== undefined
          ? { ...(old.plan.limitSettings ?? {}), ...(o.capacity !== undefined ? { capacity: o.capacity as number } : {}), ...(o.balance !== undefined ? { balance: o.balance as number } : {}) }
          : undefined;
      const { solved, report } = rebalancePlan(old, stops, {
        ...(o.maxMoved ? { budget: o.maxMoved as { stops: number } | { demandShare: number } } : {}),
        ...(o.moveCost !== undefined ? { moveCostKm2: o.moveCost as number } : {}),
        ...(o.addZones !== undefined ? { addZones: o.addZones as number } : {}),
        ...(o.removeZones ? { removeZones: o.removeZones as number[] } : {}),
        ...(limits ? { limits } : {}),
      });
      await checkPlanCanBeSaved(file, o.name as string, o.plan as string);
      const saved = await savePlanToProject(file, solved, o.name as string, { parent: o.plan as string });
      const notes = typeof o.out === 'string' ? writePlanFiles(solved, { geojson: o.out }) : [];
      for (const note of [...report.notes, ...notes]) io.err(`note: ${note}\n`);
      if (!report.feasible) io.err('warning: the rebalanced plan does not meet every zone bound (see the zones table)\n');
      if (o.json) io.out(`${JSON.stringify({ saved, report }, null, 2)}\n`);
      else io.out(`${rebalanceText(report, o.plan as string, saved.name)}\nsaved as plan ${saved.name} in ${file}\n`);
    });
}
