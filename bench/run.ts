/**
 * npm run bench: Zoneplan's engine side by side with the npm k-means packages on the same data,
 * each measurement in its own process, then the whole command line on a million stops.
 * Results: bench/results/latest.json and a Markdown table on stdout (for the README).
 *
 *   npm run bench                 every case
 *   npm run bench -- --quick      skip the npm peers at 1M stops (they take minutes)
 *
 * Timings are wall-clock on whatever machine runs this; no test asserts them.
 */
import { execFileSync, spawnSync } from 'node:child_process';
import { mkdirSync, mkdtempSync, rmSync, writeFileSync, statSync, openSync, writeSync, closeSync } from 'node:fs';
import { cpus, tmpdir, totalmem } from 'node:os';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { clusteredStops, stopsCsv } from './data.js';

const here = path.dirname(fileURLToPath(import.meta.url));
const root = path.resolve(here, '..');
const quick = process.argv.includes('--quick');

interface CaseResult {
  engine: string;
  stops: number;
  zones: number;
  ms: number;
  objectiveKm2: number;
  iterations: number;
  converged: boolean | null;
  peakRssMB: number;
  note?: string;
  error?: string;
}

function runCase(engine: string, stops: number, zones: number): CaseResult {
  const r = spawnSync(process.execPath, ['--expose-gc', '--max-old-space-size=8192', '--import', 'tsx', path.join(here, 'case.ts'), engine, String(stops), String(zones)], {
    cwd: root,
    encoding: 'utf8',
    timeout: 30 * 60_000,
  });
  const line = r.stdout.trim().split('\n').pop() ?? '';
  try {
    return JSON.parse(line) as CaseResult;
  } catch {
    return { engine, stops, zones, ms: Number.NaN, objectiveKm2: Number.NaN, iterations: 0, converged: null, peakRssMB: 0, error: (r.stderr || r.error?.message || 'no output').slice(-400) };
  }
}

const sizes = [100_000, 1_000_000];
const zoneCounts = [20, 100];
const engines = ['zoneplan', 'ml-kmeans', 'skmeans'];
const results: CaseResult[] = [];
for (const stops of sizes) {
  for (const zones of zoneCounts) {
    for (const engine of engines) {
      if (quick && stops >= 1_000_000 && engine !== 'zoneplan') continue;
      process.stderr.write(`bench: ${engine} ${stops} stops x ${zones} zones ... `);
      const r = runCase(engine, stops, zones);
      process.stderr.write(r.error ? `failed: ${r.error}\n` : `${r.ms} ms\n`);
      results.push(r);
    }
  }
}

// The whole process: read a CSV of 1M stops, plan 100 zones, write the GeoJSON plan.
const work = mkdtempSync(path.join(tmpdir(), 'zoneplan-bench-'));
const csv = path.join(work, 'stops-1m.csv');
const fd = openSync(csv, 'w');
for (const chunk of stopsCsv(clusteredStops(1_000_000))) writeSync(fd, chunk);
closeSync(fd);
const out = path.join(work, 'plan.geojson');
process.stderr.write('bench: whole process, 1M stops x 100 zones ... ');
const t0 = performance.now();
const timed = spawnSync('/usr/bin/time', ['-f', '%e %M', process.execPath, path.join(root, 'bin', 'zoneplan.js'), 'plan', csv, '--zones', '100', '--out', out, '--json', '--quiet'], {
  cwd: root,
  encoding: 'utf8',
  maxBuffer: 64 << 20,
});
const wallMs = performance.now() - t0;
const timeLine = timed.stderr.trim().split('\n').pop() ?? '';
const [, maxKb] = timeLine.split(' ').map(Number);
let report: { objectiveKm2?: number; iterations?: number; converged?: boolean; timings?: Record<string, number> } = {};
try {
  report = JSON.parse(timed.stdout) as typeof report;
} catch {
  /* reported below */
}
const wholeProcess = {
  stops: 1_000_000,
  zones: 100,
  exitCode: timed.status,
  wallMs: Math.round(wallMs),
  peakRssMB: maxKb ? Math.round(maxKb / 1024) : null,
  csvMB: Math.round(statSync(csv).size / 2 ** 20),
  geojsonMB: timed.status === 0 ? Math.round(statSync(out).size / 2 ** 20) : null,
  objectiveKm2: report.objectiveKm2 ?? null,
  iterations: report.iterations ?? null,
  converged: report.converged ?? null,
  phasesMs: report.timings ?? null,
};
process.stderr.write(`${wholeProcess.wallMs} ms\n`);
rmSync(work, { recursive: true, force: true });

// Workload limits (balance band +-5%) and zone boundaries: bench/limits-case.ts, one process each.
interface LimitsCase {
  mode: string;
  stops: number;
  zones: number;
  ms: number;
  peakRssMB?: number;
  lpObjectiveKm2?: number;
  objectiveKm2?: number;
  lowerBoundKm2?: number;
  gap?: number;
  feasible?: boolean;
  iterations?: number;
  converged?: boolean;
  status?: string;
  error?: string;
}
function runLimits(mode: string, stops: number, zones: number, timeoutMin: number): LimitsCase {
  process.stderr.write(`bench: ${mode} ${stops} stops x ${zones} zones ... `);
  const r = spawnSync(process.execPath, ['--max-old-space-size=8192', '--import', 'tsx', path.join(here, 'limits-case.ts'), mode, String(stops), String(zones)], {
    cwd: root,
    encoding: 'utf8',
    timeout: timeoutMin * 60_000,
  });
  const line = r.stdout.trim().split('\n').pop() ?? '';
  try {
    const c = JSON.parse(line) as LimitsCase;
    process.stderr.write(`${c.ms} ms\n`);
    return c;
  } catch {
    const why = r.signal === 'SIGTERM' ? `not finished within ${timeoutMin} min` : (r.stderr || 'no output').slice(-300);
    process.stderr.write(`${why}\n`);
    return { mode, stops, zones, ms: Number.NaN, error: why };
  }
}
const limits: LimitsCase[] = [];
// The assignment step alone, ours and glpk.js on the same LP, up to the largest size glpk.js
// finishes within 5 minutes here.
for (const [stops, zones] of [
  [2_000, 10],
  [5_000, 20],
  [10_000, 20],
] as const) {
  limits.push(runLimits('step', stops, zones, 5));
  const g = runLimits('glpk', stops, zones, 5);
  limits.push(g);
  if (g.error) break;
}
limits.push(runLimits('step', 100_000, 50, 10));
if (!quick) limits.push(runLimits('step', 1_000_000, 200, 5));
// The whole limited plan.
limits.push(runLimits('plan', 100_000, 50, 15));
if (!quick) limits.push(runLimits('plan', 1_000_000, 200, 5));
// Boundaries and zone statistics.
limits.push(runLimits('zones', 100_000, 50, 10));
limits.push(runLimits('zones', 1_000_000, 200, 15));

// The map window: first draw of 100k stops in headless Chromium (test/e2e/draw-bench.mjs).
process.stderr.write('bench: map window, first draw of 100k stops ... ');
const draw = spawnSync(process.execPath, [path.join(root, 'test', 'e2e', 'draw-bench.mjs'), '--runs', '5'], { cwd: root, encoding: 'utf8', timeout: 10 * 60_000 });
const drawLine = draw.stdout.trim().split('\n').pop() ?? '';
const firstDraw = { line: draw.status === null ? 'not finished within 10 min' : drawLine || (draw.stderr || 'no output').slice(-300), exitCode: draw.status };
process.stderr.write(`${firstDraw.line}\n`);

const machine = {
  date: new Date().toISOString(),
  node: process.version,
  cpus: cpus().length,
  cpu: cpus()[0]?.model ?? 'unknown',
  memoryGiB: Math.round(totalmem() / 2 ** 30),
  commit: (() => {
    try {
      // Uncommitted changes are named: the figures are then not those of the commit alone.
      const head = execFileSync('git', ['rev-parse', '--short', 'HEAD'], { cwd: root, encoding: 'utf8' }).trim();
      const dirty = execFileSync('git', ['status', '--porcelain', '--untracked-files=no', '--', 'src', 'bench', ':!bench/results'], { cwd: root, encoding: 'utf8' }).trim() !== '';
      return dirty ? `${head} with uncommitted changes` : head;
    } catch {
      return null;
    }
  })(),
};
mkdirSync(path.join(here, 'results'), { recursive: true });
writeFileSync(path.join(here, 'results', 'latest.json'), `${JSON.stringify({ machine, engine: results, wholeProcess, limits, firstDraw }, null, 2)}\n`);

// Markdown for the README: each peer's time and objective as a ratio to Zoneplan's, same run.
const lines = [
  `Measured ${machine.date.slice(0, 10)} on ${machine.cpus} cores (${machine.cpu}), Node ${machine.node}, commit ${machine.commit ?? '?'}.`,
  '',
  '| stops | zones | engine | time (s) | iterations | objective (km²) | time / Zoneplan | objective / Zoneplan | peak RSS (MB) |',
  '|---:|---:|---|---:|---:|---:|---:|---:|---:|',
];
for (const r of results) {
  const ours = results.find((o) => o.engine === 'zoneplan' && o.stops === r.stops && o.zones === r.zones);
  const ratio = (a: number, b: number | undefined): string => (b && Number.isFinite(a) ? (a / b).toFixed(2) : '-');
  lines.push(
    `| ${r.stops.toLocaleString('en')} | ${r.zones} | ${r.engine} | ${r.error ? 'failed' : (r.ms / 1000).toFixed(2)} | ${r.iterations}${r.converged === false ? ' (not converged)' : ''} | ${Number.isFinite(r.objectiveKm2) ? r.objectiveKm2.toExponential(4) : '-'} | ${ratio(r.ms, ours?.ms)} | ${ratio(r.objectiveKm2, ours?.objectiveKm2)} | ${r.peakRssMB} |`,
  );
}
lines.push(
  '',
  `Whole process (\`zoneplan plan\` on a ${wholeProcess.csvMB} MB CSV of 1,000,000 stops, 100 zones, writing a ${wholeProcess.geojsonMB ?? '?'} MB GeoJSON plan): ` +
    `${(wholeProcess.wallMs / 1000).toFixed(2)} s wall, peak RSS ${wholeProcess.peakRssMB ?? '?'} MB` +
    (wholeProcess.phasesMs ? ` (read ${(wholeProcess.phasesMs.readMs! / 1000).toFixed(2)} s, plan ${(wholeProcess.phasesMs.solveMs! / 1000).toFixed(2)} s, write ${(wholeProcess.phasesMs.writeMs! / 1000).toFixed(2)} s)` : '') +
    `, ${wholeProcess.iterations ?? '?'} iterations, ${wholeProcess.converged ? 'converged' : 'not converged'}.`,
);
lines.push(
  '',
  'Workload limits (balance band ±5% of the mean zone demand, skewed demand) and zone boundaries:',
  '',
  '| case | stops | zones | engine | time (s) | objective (km²) | LP bound (km²) | gap | peak RSS (MB) |',
  '|---|---:|---:|---|---:|---:|---:|---:|---:|',
);
const what: Record<string, string> = { step: 'assignment step', glpk: 'assignment step (LP)', plan: 'whole limited plan', zones: 'boundaries + statistics' };
for (const c of limits) {
  const engine = c.mode === 'glpk' ? 'glpk.js 5.0.0' : 'zoneplan';
  const obj = c.mode === 'glpk' ? c.lpObjectiveKm2 : c.objectiveKm2;
  const ours = c.mode === 'glpk' ? limits.find((o) => o.mode === 'step' && o.stops === c.stops && o.zones === c.zones) : undefined;
  const vs = ours && !ours.error && !c.error ? ` (${(c.ms / ours.ms).toFixed(1)}× ours; LP ${((c.lpObjectiveKm2! / ours.lpObjectiveKm2!) - 1).toExponential(1)} rel.)` : '';
  lines.push(
    `| ${what[c.mode] ?? c.mode} | ${c.stops.toLocaleString('en')} | ${c.zones} | ${engine} | ${c.error ? c.error : (c.ms / 1000).toFixed(2) + vs} | ${obj !== undefined ? obj.toExponential(4) : '-'} | ${c.lowerBoundKm2 !== undefined ? c.lowerBoundKm2.toExponential(4) : c.mode === 'glpk' && c.lpObjectiveKm2 !== undefined ? c.lpObjectiveKm2.toExponential(4) : '-'} | ${c.gap !== undefined ? (c.gap * 100).toFixed(2) + '%' : '-'} | ${c.peakRssMB ?? '-'} |`,
  );
}
lines.push('', `Map window (headless Debian Chromium, software rendering): ${firstDraw.line}.`);
console.log(lines.join('\n'));
