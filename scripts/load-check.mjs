#!/usr/bin/env node
// Load check (hardening issue, "Load"; run by .ci/run after npm test): 1M stops imported,
// planned with a capacity, exported and drawn within 2 GB of memory a process; a 5M-stop import
// completes or refuses with a clear memory message; a ~2 GB file is refused quickly. Never an
// out-of-memory crash. Every step runs as its own child process with its wall time and peak RSS
// measured (scripts/measure.mjs, shared with scripts/stress-import.mjs). Prints a table, writes
// test-results/load.json (every figure, a pass/fail per check) and exits 1 when a check fails.
//
//   npm run build && node scripts/load-check.mjs        the full check (about 4 minutes on 2 cores)
//   node scripts/load-check.mjs --stops 100000 --big-stops 500000 --huge 0     a quick try
//   options: --stops N (1000000), --zones K (20), --capacity-factor F (1.25: capacity = F x mean
//   zone demand), --big-stops N (5000000; 0 skips), --huge SIZE (2G; 0 skips), --limit-mb MB
//   (2048), --no-draw, --cli FILE (the zoneplan entry; default bin/zoneplan.js, i.e. dist/ when
//   built), --dir DIR (work folder; default a new temporary one, removed at the end), --keep,
//   --out FILE (test-results/load.json)
//
// The ~2 GB file is real CSV text on disk: the 1M-stop file's rows repeated (ids repeat) up to the
// size. Generating 2 GB of fresh rows takes minutes; the refusal depends on the size alone, which
// zoneplan checks before it reads a byte.
import { spawn, spawnSync } from 'node:child_process';
import { createReadStream, existsSync, mkdirSync, mkdtempSync, openSync, closeSync, readFileSync, rmSync, statSync, writeFileSync, writeSync } from 'node:fs';
import { cpus, tmpdir } from 'node:os';
import path from 'node:path';
import { createInterface } from 'node:readline';
import { GIB, childProcesses, generateStopsCsv, isOomCrash, messageOf, outcomeOf, parseSize, peakOfTree, root, runZoneplan, vmHwmKb } from './measure.mjs';

// ---- options

const argv = process.argv.slice(2);
const opt = (name, fallback) => {
  const i = argv.indexOf(`--${name}`);
  return i >= 0 ? (argv[i + 1] !== undefined && !argv[i + 1].startsWith('--') ? argv[i + 1] : true) : fallback;
};
const N = Number(opt('stops', 1_000_000));
const K = Number(opt('zones', 20));
const CAPACITY_FACTOR = Number(opt('capacity-factor', 1.25));
const BIG = Number(opt('big-stops', 5_000_000));
const HUGE = String(opt('huge', '2G')) === '0' ? 0 : parseSize(opt('huge', '2G'));
const LIMIT_MB = Number(opt('limit-mb', 2048));
const DRAW = opt('no-draw', false) !== true;
const KEEP = opt('keep', false) === true;
const OUT = path.resolve(root, String(opt('out', 'test-results/load.json')));
const CLI = opt('cli', null) ? path.resolve(String(opt('cli'))) : path.join(root, 'bin', 'zoneplan.js');
const DIR = opt('dir', null) ? path.resolve(String(opt('dir'))) : mkdtempSync(path.join(tmpdir(), 'zoneplan-load-'));
mkdirSync(DIR, { recursive: true });
const SCREENSHOT = path.join(path.dirname(OUT), 'load-draw.png');
const CHROMIUM = '/usr/bin/chromium';
const CHROMIUM_ARGS = ['--no-sandbox', '--disable-gpu', '--disable-quic', '--no-first-run', '--disable-background-networking', '--disable-component-update', '--disable-sync'];

if (!opt('cli', null) && !existsSync(path.join(root, 'dist', 'node', 'zoneplan.mjs')) && !process.env.ZONEPLAN_FROM_SOURCE) {
  console.error('load-check: dist/ is not built: run npm run build first (or set ZONEPLAN_FROM_SOURCE=1 to run the source through tsx)');
  process.exit(1);
}

const t0All = performance.now();
const checks = [];
let capacity = null;
const r1 = (x) => (x === null || x === undefined ? null : Math.round(x * 10) / 10);
const mb = (x) => (x === null || x === undefined ? null : Math.round(x));
const short = (s) => s.split(DIR + path.sep).join('').split(DIR).join('.');

// A fault of this script itself still leaves test-results/load.json, with the fault as a failed check.
for (const event of ['uncaughtException', 'unhandledRejection']) {
  process.once(event, (e) => {
    record('the load check ran to its end', {}, [`${event}: ${e instanceof Error ? e.stack ?? e.message : String(e)}`.slice(0, 1000)]);
    finish();
    process.exit(1);
  });
}

/** Records one check: name, pass, the figures, and the reasons it failed (empty when it passed). */
function record(name, figures, failures) {
  const c = { name, pass: failures.length === 0, ...figures, failures };
  checks.push(c);
  console.log(`${c.pass ? 'PASS' : 'FAIL'}  ${name}${c.wallS !== undefined ? `  ${c.wallS} s` : ''}${c.peakRssMb !== undefined ? `  ${c.peakRssMb} MB` : ''}${failures.length ? `\n      ${failures.join('\n      ')}` : ''}`);
  return c;
}

/** The figures of one measured zoneplan run, and the failures every run shares (crash, exit, memory). */
function runFigures(run, cliArgs, { allowed = [0], limitMb = LIMIT_MB } = {}) {
  const figures = {
    command: short(`zoneplan ${cliArgs.join(' ')}`),
    wallS: r1(run.wallS),
    peakRssMb: mb(run.peakRssMb),
    exitCode: run.code,
    signal: run.signal,
    outcome: outcomeOf(run),
    message: short(messageOf(run)),
  };
  const warnings = run.code === 0 ? run.stderr.split('\n').filter((l) => l.startsWith('warning:')) : [];
  if (warnings.length) figures.warnings = warnings.slice(0, 3).map((w) => short(w).slice(0, 300));
  const failures = [];
  if (run.timedOut) failures.push('did not finish in time (killed)');
  if (isOomCrash(run)) failures.push(`out-of-memory crash (exit ${run.code}, ${run.signal ?? 'no signal'})`);
  else if (!allowed.includes(run.code)) failures.push(`exit ${run.code}${run.signal ? ` (${run.signal})` : ''}, expected ${allowed.join(' or ')}: ${figures.message.slice(0, 300)}`);
  if (/\n\s+at .+:\d+:\d+\)?\n/.test(run.stderr)) failures.push('printed a stack trace');
  if (limitMb && run.peakRssMb >= limitMb) failures.push(`peak RSS ${mb(run.peakRssMb)} MB is not under ${limitMb} MB`);
  return { figures, failures };
}

async function zoneplan(cliArgs, options = {}) {
  return runZoneplan(cliArgs, { cli: CLI, timeoutMs: 15 * 60_000, ...options });
}

/** Lines of a text file, streamed. */
function lines(file) {
  return createInterface({ input: createReadStream(file, { highWaterMark: 1 << 20 }), crlfDelay: Infinity });
}

/**
 * A FeatureCollection written one feature a line (as zoneplan writes them), checked as it streams:
 * the first line opens the collection, every feature line parses as JSON, the last closes it.
 * Returns the foreign members of the first line, the features counted by role and geometry type,
 * and the zone features themselves (few) for geojson-validation. When the streamed check fails, the
 * whole text is parsed as well, so that a mere change of layout is not called invalid JSON.
 */
async function scanFeatureCollection(file) {
  const counts = { features: 0, byRole: {}, byGeometry: {} };
  const zones = [];
  let head = null;
  let closed = false;
  let problem = null;
  let n = 0;
  for await (const line of lines(file)) {
    n++;
    if (problem) continue;
    if (n === 1) {
      const m = /^\{"type":"FeatureCollection",(.*)"features":\[$/.exec(line);
      if (!m) problem = `line 1 does not open a FeatureCollection: ${line.slice(0, 120)}`;
      else head = m[1] ? JSON.parse(`{${m[1].replace(/,$/, '')}}`) : {};
      continue;
    }
    if (line === ']}') {
      closed = true;
      continue;
    }
    if (closed) {
      if (line.trim() !== '') problem = `text after the end of the collection at line ${n}`;
      continue;
    }
    let f;
    try {
      f = JSON.parse(line.endsWith(',') ? line.slice(0, -1) : line);
    } catch (e) {
      problem = `line ${n} is not a feature (${e.message.slice(0, 80)}): ${line.slice(0, 80)}`;
      continue;
    }
    if (f?.type !== 'Feature') {
      problem = `line ${n} is not a Feature`;
      continue;
    }
    counts.features++;
    const role = f.properties?.role ?? '(none)';
    counts.byRole[role] = (counts.byRole[role] ?? 0) + 1;
    const g = f.geometry?.type ?? 'null';
    counts.byGeometry[g] = (counts.byGeometry[g] ?? 0) + 1;
    if (g === 'Polygon' || g === 'MultiPolygon') zones.push(f);
  }
  if (!problem && !closed) problem = 'the collection is not closed (cut off?)';
  if (problem && statSync(file).size < 900 * 2 ** 20) {
    // Not the expected layout, or really broken: JSON.parse decides.
    try {
      const fc = JSON.parse(readFileSync(file, 'utf8'));
      if (fc.type === 'FeatureCollection' && Array.isArray(fc.features)) {
        problem = null;
        counts.features = fc.features.length;
        counts.byRole = {};
        counts.byGeometry = {};
        zones.length = 0;
        for (const f of fc.features) {
          const role = f.properties?.role ?? '(none)';
          counts.byRole[role] = (counts.byRole[role] ?? 0) + 1;
          const g = f.geometry?.type ?? 'null';
          counts.byGeometry[g] = (counts.byGeometry[g] ?? 0) + 1;
          if (g === 'Polygon' || g === 'MultiPolygon') zones.push(f);
        }
        const { type, features, ...rest } = fc;
        head = rest;
      }
    } catch (e) {
      problem = `${problem}; JSON.parse: ${e.message.slice(0, 160)}`;
    }
  }
  return { problem, head, counts, zones, mb: r1(statSync(file).size / 2 ** 20) };
}

/** RFC 7946 structure of the zone polygons by geojson-validation (a devDependency, as in the tests). */
async function validZones(features) {
  const mod = await import('geojson-validation');
  const valid = mod.valid ?? mod.default.valid;
  const errors = valid({ type: 'FeatureCollection', features }, true);
  return Array.isArray(errors) ? errors.slice(0, 3) : ['geojson-validation returned no trace'];
}

/**
 * An assignments CSV (stop_id, zone, km_to_centre, demand): rows, distinct ids, zones 1..K, demand
 * per zone and in all. Returns the figures and, when `keep`, the id/zone/demand of every row.
 */
async function scanAssignments(file, keep = false) {
  let header = null;
  let rows = 0;
  let bad = null;
  const ids = new Set();
  const perZone = new Map();
  let demand = 0;
  const kept = keep ? [] : null;
  for await (const line of lines(file)) {
    if (header === null) {
      header = line;
      continue;
    }
    if (line === '') continue;
    rows++;
    const c = line.split(',');
    const zone = Number(c[1]);
    const d = Number(c[3]);
    if (c.length !== 4 || !Number.isInteger(zone) || zone < 1 || zone > K || !Number.isFinite(Number(c[2])) || !(d > 0)) {
      bad ??= `row ${rows}: ${line.slice(0, 80)}`;
      continue;
    }
    ids.add(c[0]);
    perZone.set(zone, (perZone.get(zone) ?? 0) + d);
    demand += d;
    if (kept) kept.push(`${c[0]},${zone},${d}`);
  }
  return { header, rows, distinctIds: ids.size, zones: perZone.size, maxZoneDemand: Math.max(0, ...perZone.values()), demand, bad, kept };
}

// ---- (a) 1M stops: generate, plan with a capacity, export

const stopsFile = path.join(DIR, `stops-${N}.csv`);
const projectFile = path.join(DIR, 'load.zoneplan');
const planFile = path.join(DIR, 'plan.geojson');
const assignmentsFile = path.join(DIR, 'assignments.csv');
const layersDir = path.join(DIR, 'layers');
const PLAN_NAME = `load ${N} stops`;

const gen = await generateStopsCsv(stopsFile, { stops: N });
// Total demand from the file just written (the generator is deterministic; this keeps the
// capacity right for any --stops without a table of totals).
let totalDemand = 0;
{
  let first = true;
  for await (const line of lines(stopsFile)) {
    if (first) {
      first = false;
      continue;
    }
    if (line) totalDemand += Number(line.slice(line.lastIndexOf(',') + 1));
  }
}
capacity = Math.ceil((CAPACITY_FACTOR * totalDemand) / K);
record(`generate ${N.toLocaleString('en')} stops`, { stops: gen.stops, fileMb: r1(gen.bytes / 2 ** 20), totalDemand, wallS: r1(gen.generateS) }, gen.stops === N ? [] : [`wrote ${gen.stops} stops`]);

{
  const run = await zoneplan(['project', 'new', projectFile]);
  const { figures, failures } = runFigures(run, ['project', 'new', 'load.zoneplan']);
  if (run.code !== 0) record('project new', figures, failures);
}

const planArgs = ['plan', stopsFile, '--zones', String(K), '--capacity', String(capacity), '--out', planFile, '--assignments', assignmentsFile, '--project', projectFile, '--name', PLAN_NAME, '--json', '--quiet'];
let planOk = false;
{
  const run = await zoneplan(planArgs);
  const { figures, failures } = runFigures(run, planArgs);
  let report = null;
  try {
    report = JSON.parse(run.stdout);
  } catch {
    if (run.code === 0) failures.push('the --json report does not parse');
  }
  if (report) {
    const zones = report.zones ?? [];
    const maxDemand = Math.max(0, ...zones.map((z) => z.demand));
    Object.assign(figures, {
      stops: report.input?.stops,
      zones: zones.length,
      capacity,
      capacityFactor: CAPACITY_FACTOR,
      meanZoneDemand: r1(totalDemand / K),
      maxZoneDemand: maxDemand,
      zonesAtCapacity: zones.filter((z) => z.demand >= capacity).length,
      feasible: report.limits?.feasible ?? null,
      gap: report.limits?.gap ?? null,
      iterations: report.iterations,
      converged: report.converged,
      readS: r1(report.timings?.readMs / 1000),
      solveS: r1(report.timings?.solveMs / 1000),
      writeS: r1(report.timings?.writeMs / 1000),
    });
    if (report.input?.stops !== N) failures.push(`the report counts ${report.input?.stops} stops, not ${N}`);
    if (zones.length !== K) failures.push(`the report has ${zones.length} zones, not ${K}`);
    if (report.limits?.feasible !== true) failures.push(`the plan is not reported feasible (breaches: ${JSON.stringify(report.limits?.breaches ?? null).slice(0, 200)})`);
    if (maxDemand > capacity) failures.push(`a zone carries ${maxDemand}, over the capacity ${capacity}`);
  }
  for (const f of [planFile, assignmentsFile, projectFile]) if (run.code === 0 && !existsSync(f)) failures.push(`${path.basename(f)} was not written`);
  planOk = run.code === 0 && failures.length === 0;
  record(`plan ${N.toLocaleString('en')} stops x ${K} zones, capacity ${capacity}`, figures, failures);
}

if (existsSync(planFile)) {
  const t = performance.now();
  const s = await scanFeatureCollection(planFile);
  const failures = [];
  if (s.problem) failures.push(`not valid GeoJSON: ${s.problem}`);
  else {
    if (s.counts.byRole.stop !== N) failures.push(`${s.counts.byRole.stop ?? 0} stop features, not ${N}`);
    if (s.counts.byRole.centre !== K) failures.push(`${s.counts.byRole.centre ?? 0} centre features, not ${K}`);
    if (s.counts.byRole.zone !== K) failures.push(`${s.counts.byRole.zone ?? 0} zone features, not ${K}`);
    if (s.head?.plan?.stops !== N || s.head?.plan?.zones !== K) failures.push(`the plan member says ${s.head?.plan?.stops} stops, ${s.head?.plan?.zones} zones`);
    const errs = await validZones(s.zones);
    if (errs.length) failures.push(`geojson-validation on the zones: ${errs.join('; ')}`);
  }
  record('plan GeoJSON: a FeatureCollection, features counted, zones RFC 7946 (geojson-validation)', { fileMb: s.mb, features: s.counts.features, byRole: s.counts.byRole, byGeometry: s.counts.byGeometry, wallS: r1((performance.now() - t) / 1000) }, failures);
}

let planAssignments = null;
if (existsSync(assignmentsFile)) {
  const t = performance.now();
  const a = await scanAssignments(assignmentsFile, true);
  planAssignments = a.kept;
  const failures = [];
  if (a.header !== 'stop_id,zone,km_to_centre,demand') failures.push(`header ${a.header}`);
  if (a.bad) failures.push(`a row that does not fit: ${a.bad}`);
  if (a.rows !== N || a.distinctIds !== N) failures.push(`${a.rows} rows, ${a.distinctIds} distinct ids, not ${N}`);
  if (a.zones !== K) failures.push(`${a.zones} zones used, not ${K}`);
  if (a.demand !== totalDemand) failures.push(`demand ${a.demand} in all, not ${totalDemand}`);
  if (a.maxZoneDemand > capacity) failures.push(`a zone carries ${a.maxZoneDemand}, over the capacity ${capacity}`);
  record('assignments CSV: every stop once, capacity held', { rows: a.rows, zones: a.zones, maxZoneDemand: a.maxZoneDemand, capacity, wallS: r1((performance.now() - t) / 1000) }, failures);
}

if (existsSync(planFile)) {
  const exportArgs = ['export', planFile, '--layers', layersDir];
  const run = await zoneplan(exportArgs);
  const { figures, failures } = runFigures(run, exportArgs);
  if (run.code === 0) {
    const t = performance.now();
    const zonesLayer = path.join(layersDir, 'zones.geojson');
    if (!existsSync(zonesLayer)) failures.push('zones.geojson was not written');
    else {
      const z = JSON.parse(readFileSync(zonesLayer, 'utf8'));
      const errs = await validZones(z.features ?? []);
      if (errs.length) failures.push(`geojson-validation on zones.geojson: ${errs.join('; ')}`);
      if (z.features?.length !== K) failures.push(`zones.geojson has ${z.features?.length} features, not ${K}`);
      figures.zoneFeatures = z.features?.length;
    }
    for (const [layer, want] of [['centres', K], ['stops', N]]) {
      const f = path.join(layersDir, `${layer}.geojson`);
      if (!existsSync(f)) {
        failures.push(`${layer}.geojson was not written`);
        continue;
      }
      const s = await scanFeatureCollection(f);
      if (s.problem) failures.push(`${layer}.geojson is not valid GeoJSON: ${s.problem}`);
      else if (s.counts.features !== want) failures.push(`${layer}.geojson has ${s.counts.features} features, not ${want}`);
      figures[`${layer}Features`] = s.counts.features;
      figures[`${layer}Mb`] = s.mb;
    }
    const csv = path.join(layersDir, 'assignments.csv');
    if (!existsSync(csv)) failures.push('assignments.csv was not written');
    else {
      const a = await scanAssignments(csv, true);
      // Distances may differ in the last decimal (the plan file keeps 6-decimal coordinates);
      // every stop must keep its zone and demand, in the same order.
      let differ = 0;
      let firstDiffer = null;
      for (let i = 0; i < Math.max(a.kept.length, planAssignments?.length ?? 0); i++) {
        if (a.kept[i] !== planAssignments?.[i]) {
          differ++;
          firstDiffer ??= `${planAssignments?.[i]} -> ${a.kept[i]}`;
        }
      }
      figures.assignmentRows = a.rows;
      if (a.rows !== N) failures.push(`the exported assignments.csv has ${a.rows} rows, not ${N}`);
      if (differ) failures.push(`${differ} stops differ in zone or demand from the plan's assignments (first: ${firstDiffer})`);
    }
    figures.checkS = r1((performance.now() - t) / 1000);
  }
  record('export the plan file as layers (zones, centres, stops, assignments)', figures, failures);
}
planAssignments = null;

// ---- (b) draw the 1M-stop plan in the map window (browser mode, headless Chromium)

if (DRAW && planOk) {
  const failures = [];
  const figures = {};
  const dataDir = path.join(DIR, 'data');
  mkdirSync(dataDir, { recursive: true });
  const tStart = performance.now();
  const server = spawn(process.execPath, [CLI, 'serve', '--port', '0', '--project', projectFile], { cwd: root, env: { ...process.env, ZONEPLAN_DATA_DIR: dataDir }, stdio: ['ignore', 'pipe', 'pipe'] });
  const killServer = () => server.exitCode === null && server.kill('SIGTERM');
  process.once('exit', killServer);
  let serverErr = '';
  server.stderr.on('data', (b) => (serverErr += b));
  let serverHwmKb = 0;
  const serverPoll = setInterval(() => (serverHwmKb = Math.max(serverHwmKb, vmHwmKb(server.pid))), 200);
  let browser = null;
  let tree = null;
  try {
    const url = await new Promise((resolve, reject) => {
      let out = '';
      const timer = setTimeout(() => reject(new Error('zoneplan serve printed no URL within 120 s')), 120_000);
      server.stdout.on('data', (b) => {
        out += b;
        const line = out.split('\n').find((l) => /^http:\/\/127\.0\.0\.1:\d+\/\?token=/.test(l.trim()));
        if (line) {
          clearTimeout(timer);
          resolve(line.trim());
        }
      });
      server.once('exit', (c) => {
        clearTimeout(timer);
        reject(new Error(`zoneplan serve exited (${c}) before printing its URL: ${serverErr.slice(0, 300)}`));
      });
    });
    figures.serverStartS = r1((performance.now() - tStart) / 1000);
    const { chromium } = await import('playwright-core');
    browser = await chromium.launch({ executablePath: CHROMIUM, headless: true, args: CHROMIUM_ARGS });
    // Playwright starts Chromium as a child of this process (browser.process() is only on launchServer).
    const browserPids = childProcesses(process.pid, /chrom/i);
    if (browserPids.length !== 1) throw new Error(`found ${browserPids.length} Chromium processes started by this one, not 1`);
    tree = peakOfTree(browserPids[0], 100);
    const page = await browser.newPage({ viewport: { width: 1280, height: 800 } });
    const pageErrors = [];
    page.on('pageerror', (e) => pageErrors.push(e.message));
    const t = performance.now();
    await page.goto(url);
    await page.waitForSelector('body[data-ready="1"]', { timeout: 300_000 });
    // Cold: the server reads the plan from the project on this first request, as when a planner
    // opens the project. Then a second page load, which finds the server's copy (as in
    // test/e2e/draw-bench.mjs).
    figures.firstDrawS = r1((performance.now() - t) / 1000);
    const d = await page.locator('#map').evaluate((m) => ({ ...m.dataset }));
    const planName = await page.evaluate(() => document.body.dataset.planName ?? null);
    Object.assign(figures, { stopsDrawn: Number(d.stopCount), planName, fetchMs: Number(d.fetchMs), renderMs: Number(d.renderMs), stopsCanvasMs: Number(d.drawMs) });
    if (Number(d.stopCount) !== N) failures.push(`the window drew ${d.stopCount} stops, not ${N}`);
    if (planName !== PLAN_NAME) failures.push(`the window shows plan ${planName}, not ${PLAN_NAME}`);
    mkdirSync(path.dirname(SCREENSHOT), { recursive: true });
    await page.screenshot({ path: SCREENSHOT });
    figures.screenshot = path.relative(root, SCREENSHOT);
    await page.close();
    const again = await browser.newPage({ viewport: { width: 1280, height: 800 } });
    again.on('pageerror', (e) => pageErrors.push(e.message));
    const t2 = performance.now();
    await again.goto(url);
    await again.waitForSelector('body[data-ready="1"]', { timeout: 300_000 });
    figures.secondDrawS = r1((performance.now() - t2) / 1000);
    const d2 = await again.locator('#map').evaluate((m) => ({ ...m.dataset }));
    Object.assign(figures, { secondFetchMs: Number(d2.fetchMs), secondRenderMs: Number(d2.renderMs) });
    if (Number(d2.stopCount) !== N) failures.push(`the second page load drew ${d2.stopCount} stops, not ${N}`);
    if (pageErrors.length) failures.push(`page errors: ${pageErrors.slice(0, 3).join('; ')}`);
  } catch (e) {
    failures.push(e instanceof Error ? e.message.split('\n')[0] : String(e));
  } finally {
    if (tree) {
      const b = tree.stop();
      Object.assign(figures, { browserLargestProcessMb: mb(b.largestProcessMb), browserPeakTotalPssMb: mb(b.peakTotalPssMb), browserProcesses: b.processes });
      if (b.largestProcessMb >= LIMIT_MB) failures.push(`a Chromium process peaked at ${mb(b.largestProcessMb)} MB, not under ${LIMIT_MB} MB`);
    }
    if (browser) await browser.close().catch(() => {});
    serverHwmKb = Math.max(serverHwmKb, vmHwmKb(server.pid));
    clearInterval(serverPoll);
    killServer();
    figures.serverPeakRssMb = mb(serverHwmKb / 1024);
    figures.peakRssMb = figures.serverPeakRssMb;
    figures.wallS = r1((performance.now() - tStart) / 1000);
    if (serverHwmKb / 1024 >= LIMIT_MB) failures.push(`the server peaked at ${figures.serverPeakRssMb} MB, not under ${LIMIT_MB} MB`);
    if (/\n\s+at .+:\d+:\d+\)?\n/.test(serverErr)) failures.push('the server printed a stack trace');
  }
  record(`draw the ${N.toLocaleString('en')}-stop plan in the map window (browser mode, headless Chromium)`, figures, failures);
} else if (DRAW) {
  record(`draw the ${N.toLocaleString('en')}-stop plan in the map window (browser mode, headless Chromium)`, {}, ['not tried: the plan step failed']);
}

// ---- (c) 5M-stop import; a ~2 GB file

/** "reading it needs about ... of memory": the memory refusal, as opposed to any other exit 2. */
const MEMORY_MESSAGE = /needs about \d+ MB of memory/;

if (BIG > 0) {
  const bigFile = path.join(DIR, `stops-${BIG}.csv`);
  const g = await generateStopsCsv(bigFile, { stops: BIG });
  record(`generate ${BIG.toLocaleString('en')} stops`, { stops: g.stops, fileMb: r1(g.bytes / 2 ** 20), wallS: r1(g.generateS) }, g.stops === BIG ? [] : [`wrote ${g.stops} stops`]);
  for (const heap of [null, 512]) {
    const args = ['check', bigFile];
    const run = await zoneplan(args, { maxOldSpace: heap });
    // What must hold is no crash: it is read (exit 0) or refused with the memory message (exit 2),
    // with Node's default heap and with a 512 MB one (where 5M stops are refused today).
    const { figures, failures } = runFigures(run, heap ? [`--max-old-space-size=${heap}`, ...args] : args, { allowed: [0, 2], limitMb: 0 });
    figures.maxOldSpaceMb = heap;
    figures.fileMb = r1(g.bytes / 2 ** 20);
    if (run.code === 2 && !MEMORY_MESSAGE.test(run.stderr)) failures.push(`refused, but not with the memory message: ${figures.message.slice(0, 200)}`);
    if (run.code === 0 && !new RegExp(`${BIG} stops`).test(run.stdout)) failures.push(`completed without reporting ${BIG} stops: ${figures.message.slice(0, 200)}`);
    record(`check ${BIG.toLocaleString('en')} stops${heap ? `, heap limited to ${heap} MB` : ''}: completes or refuses with the memory message`, figures, failures);
  }
  if (!KEEP) rmSync(bigFile, { force: true });
}

if (HUGE > 0 && HUGE <= 400 * 2 ** 20) {
  record(`check a ${r1(HUGE / 2 ** 20)} MB file`, {}, ['--huge must be over 400 MB, the size zoneplan refuses files at']);
} else if (HUGE > 0) {
  const hugeFile = path.join(DIR, 'huge.csv');
  const t = performance.now();
  // Real CSV text: the header and rows of the 1M-stop file, repeated until the size is reached.
  const rows = readFileSync(stopsFile).subarray('stop_id,lat,lon,demand\n'.length);
  const fd = openSync(hugeFile, 'w');
  let size = writeSync(fd, 'stop_id,lat,lon,demand\n');
  while (size < HUGE) size += writeSync(fd, rows);
  closeSync(fd);
  const makeS = (performance.now() - t) / 1000;
  const args = ['check', hugeFile];
  const run = await zoneplan(args);
  const { figures, failures } = runFigures(run, args, { allowed: [2], limitMb: LIMIT_MB });
  Object.assign(figures, { fileMb: r1(statSync(hugeFile).size / 2 ** 20), made: 'the 1M-stop rows repeated', makeS: r1(makeS) });
  if (run.code === 2 && !/are not read: split it/.test(run.stderr)) failures.push(`refused, but not for its size: ${figures.message.slice(0, 200)}`);
  if (run.wallS > 10) failures.push(`took ${r1(run.wallS)} s to refuse (not quick: over 10 s)`);
  record(`check a ${r1(HUGE / GIB)} GiB file: refused quickly for its size`, figures, failures);
  rmSync(hugeFile, { force: true });
}

// ---- the table and test-results/load.json

finish();

/** Prints the table, writes test-results/load.json, removes the work folder, sets the exit code. */
function finish() {
  const totalS = r1((performance.now() - t0All) / 1000);
  const passed = checks.filter((c) => c.pass).length;
  const failed = checks.length - passed;
  let commit = null;
  try {
    commit = spawnSync('git', ['rev-parse', '--short', 'HEAD'], { cwd: root, encoding: 'utf8' }).stdout.trim() || null;
  } catch {
    /* no git */
  }
  const result = {
    generator: 'scripts/load-check.mjs',
    date: new Date().toISOString(),
    commit,
    node: process.version,
    cpus: cpus().length,
    cpu: cpus()[0]?.model ?? null,
    settings: { stops: N, zones: K, capacityFactor: CAPACITY_FACTOR, capacity, bigStops: BIG, hugeBytes: HUGE, limitMb: LIMIT_MB, draw: DRAW },
    totalWallS: totalS,
    passed,
    failed,
    checks,
  };
  mkdirSync(path.dirname(OUT), { recursive: true });
  writeFileSync(OUT, JSON.stringify(result, null, 2) + '\n');

  const rowsOut = checks.map((c) => [
    c.pass ? 'pass' : 'FAIL',
    c.name,
    c.wallS ?? '',
    c.peakRssMb ?? '',
    !c.pass ? c.failures[0].slice(0, 110) : c.outcome ?? (c.stopsDrawn !== undefined ? `${c.stopsDrawn} drawn, first draw ${c.firstDrawS} s (again ${c.secondDrawS} s), Chromium ${c.browserLargestProcessMb} MB largest process, ${c.browserPeakTotalPssMb} MB all (PSS)` : ''),
  ]);
  const head = ['', 'check', 'wall s', 'peak RSS MB', 'outcome'];
  const width = head.map((h, i) => Math.max(h.length, ...rowsOut.map((r) => String(r[i]).length)));
  const fmtRow = (r) => r.map((x, i) => (i === 2 || i === 3 ? String(x).padStart(width[i]) : String(x).padEnd(width[i]))).join('  ');
  console.log(`\nload check: ${N.toLocaleString('en')} stops x ${K} zones (capacity ${capacity}), ${BIG.toLocaleString('en')}-stop import, ${r1(HUGE / GIB)} GiB file; limit ${LIMIT_MB} MB a process; Node ${process.version}, ${cpus().length} cores`);
  console.log(fmtRow(head));
  for (const r of rowsOut) console.log(fmtRow(r));
  console.log(`${passed} passed, ${failed} failed in ${totalS} s; figures in ${path.relative(root, OUT)}`);

  if (!KEEP) rmSync(DIR, { recursive: true, force: true });
  else console.log(`kept: ${DIR}`);
  process.exitCode = failed ? 1 : 0;
}
