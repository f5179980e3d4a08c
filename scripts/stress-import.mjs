#!/usr/bin/env node
// Stress import (issue 7, "load"): not part of npm test. Generates a large stops CSV on the fly,
// streamed to a temporary file (never held in memory here), then runs the command line on it and
// reports wall time, peak RSS and the outcome. The import must either complete or refuse with a
// clear message (exit 2): never an out-of-memory crash (exit 134 / SIGABRT) or an internal fault.
//
//   node scripts/stress-import.mjs                       5M stops, zoneplan check
//   node scripts/stress-import.mjs --stops 1000000 --plan 100 --out -- --capacity 40000
//                                                        1M stops, 100 zones with a capacity, write GeoJSON
//   node scripts/stress-import.mjs --bytes 2G            a ~2 GB file (refused: over the size limit)
//   node scripts/stress-import.mjs --max-old-space 1024  the same with a 1 GB heap (the memory refusal)
//   options: --keep (keep the CSV), --dir DIR (where to write it), --json (one JSON line of figures),
//   --cli FILE (the zoneplan entry to run; default bin/zoneplan.js, which runs dist/ when built,
//   so build first or set ZONEPLAN_FROM_SOURCE=1)
//
// Figures come from /usr/bin/time -f "%e %M" when present (GNU time: elapsed s, max RSS KB),
// else from polling /proc/PID/status (VmHWM) while the child runs.
import { spawn } from 'node:child_process';
import { createWriteStream, existsSync, mkdtempSync, readFileSync, rmSync, statSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { fileURLToPath } from 'node:url';

const root = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '..');
const dashes = process.argv.indexOf('--');
const args = process.argv.slice(2, dashes < 0 ? undefined : dashes);
/** Everything after "--" goes to the zoneplan command as it is (e.g. -- --capacity 40000). */
const extra = dashes < 0 ? [] : process.argv.slice(dashes + 1);
const opt = (name, fallback) => {
  const i = args.indexOf(`--${name}`);
  return i >= 0 ? (args[i + 1] && !args[i + 1].startsWith('--') ? args[i + 1] : true) : fallback;
};
const size = (s) => {
  const m = /^(\d+(?:\.\d+)?)([kmg]?)b?$/i.exec(String(s));
  if (!m) throw new Error(`not a size: ${s}`);
  return Math.round(Number(m[1]) * { '': 1, k: 2 ** 10, m: 2 ** 20, g: 2 ** 30 }[m[2].toLowerCase()]);
};

const bytesWanted = opt('bytes', null) ? size(opt('bytes')) : null;
const stopsWanted = bytesWanted ? null : Number(opt('stops', 5_000_000));
const planZones = opt('plan', null);
const keep = opt('keep', false) === true;
const json = opt('json', false) === true;
const maxOldSpace = opt('max-old-space', null);
const dir = opt('dir', null) || mkdtempSync(path.join(tmpdir(), 'zoneplan-stress-'));
const file = path.join(dir, 'stress-stops.csv');

/** Writes the CSV through a stream with back-pressure: clustered towns, skewed demand, deterministic. */
async function generate() {
  const out = createWriteStream(file, { highWaterMark: 1 << 22 });
  const header = 'stop_id,lat,lon,demand\n';
  out.write(header);
  let written = header.length;
  let x = 0x9e3779b9;
  const rnd = () => {
    x ^= x << 13;
    x >>>= 0;
    x ^= x >>> 17;
    x ^= x << 5;
    x >>>= 0;
    return x / 4294967296;
  };
  const towns = Array.from({ length: 400 }, () => [47 + rnd() * 8, 5 + rnd() * 10, 0.02 + rnd() * 0.2]);
  let i = 0;
  const t0 = performance.now();
  for (;;) {
    if (stopsWanted !== null ? i >= stopsWanted : written >= bytesWanted) break;
    let chunk = '';
    for (let k = 0; k < 20_000; k++, i++) {
      if (stopsWanted !== null && i >= stopsWanted) break;
      const t = towns[Math.floor(rnd() * rnd() * towns.length)];
      const lat = t[0] + (rnd() - 0.5) * t[2];
      const lon = t[1] + (rnd() - 0.5) * t[2] * 1.5;
      const demand = 1 + Math.floor(-Math.log(1 - rnd()) * 3);
      chunk += `S${i},${lat.toFixed(6)},${lon.toFixed(6)},${demand}\n`;
    }
    written += chunk.length;
    if (!out.write(chunk)) await new Promise((r) => out.once('drain', r));
  }
  await new Promise((resolve, reject) => out.end((e) => (e ? reject(e) : resolve())));
  return { stops: i, bytes: statSync(file).size, generateS: (performance.now() - t0) / 1000 };
}

/** Runs the CLI; peak RSS from GNU time, or from /proc polling. */
function runCli(cliArgs) {
  const cli = opt('cli', null) || path.join(root, 'bin', 'zoneplan.js');
  const node = [process.execPath, ...(maxOldSpace ? [`--max-old-space-size=${maxOldSpace}`] : []), cli, ...cliArgs];
  const gnuTime = existsSync('/usr/bin/time');
  const cmd = gnuTime ? ['/usr/bin/time', '-f', '@@time %e %M', ...node] : node;
  return new Promise((resolve) => {
    const t0 = performance.now();
    const child = spawn(cmd[0], cmd.slice(1), { cwd: root, stdio: ['ignore', 'pipe', 'pipe'] });
    let stdout = '';
    let stderr = '';
    let hwmKb = 0;
    child.stdout.on('data', (d) => (stdout += d));
    child.stderr.on('data', (d) => (stderr += d));
    const poll = gnuTime
      ? null
      : setInterval(() => {
          try {
            const m = /VmHWM:\s+(\d+)/.exec(readFileSync(`/proc/${child.pid}/status`, 'utf8'));
            if (m) hwmKb = Math.max(hwmKb, Number(m[1]));
          } catch {
            /* gone */
          }
        }, 50);
    child.on('close', (code, signal) => {
      if (poll) clearInterval(poll);
      const wallS = (performance.now() - t0) / 1000;
      const m = /@@time ([\d.]+) (\d+)/.exec(stderr);
      if (m) {
        hwmKb = Number(m[2]);
        stderr = stderr.replace(/@@time [\d.]+ \d+\n?/, '');
      }
      // GNU time reports a child killed by a signal as "Command terminated by signal N".
      const sig = signal ?? (/Command terminated by signal (\d+)/.exec(stderr)?.[1] ? `signal ${/Command terminated by signal (\d+)/.exec(stderr)[1]}` : null);
      resolve({ code, signal: sig, wallS, peakRssMb: hwmKb / 1024, stdout, stderr });
    });
  });
}

const gen = await generate();
const cliArgs = [
  ...(planZones ? ['plan', file, '--zones', String(planZones), '--quiet', ...(opt('out', false) ? ['--out', path.join(dir, 'stress-plan.geojson')] : [])] : ['check', file]),
  ...extra,
];
const run = await runCli(cliArgs);
const oom = run.code === 134 || /heap out of memory|Reached heap limit|FATAL ERROR/i.test(run.stderr) || run.signal === 'SIGABRT' || run.signal === 'signal 6';
const outcome = run.code === 0 ? 'completed' : run.code === 2 && !oom ? 'refused (exit 2)' : oom ? 'OUT OF MEMORY CRASH' : `failed (exit ${run.code}${run.signal ? `, ${run.signal}` : ''})`;
const figures = {
  command: `zoneplan ${cliArgs.map((a) => (a === file ? 'STRESS.csv' : a)).join(' ')}`,
  stops: gen.stops,
  fileMb: +(gen.bytes / 2 ** 20).toFixed(1),
  generateS: +gen.generateS.toFixed(1),
  wallS: +run.wallS.toFixed(2),
  peakRssMb: Math.round(run.peakRssMb),
  maxOldSpaceMb: maxOldSpace ? Number(maxOldSpace) : null,
  exitCode: run.code,
  outcome,
  message: (run.code === 0 ? run.stdout : run.stderr).trim().split('\n').slice(0, 3).join(' | ').slice(0, 400),
  node: process.version,
};
if (json) console.log(JSON.stringify(figures));
else {
  console.log(`stress import: ${figures.command}`);
  console.log(`  input:    ${gen.stops.toLocaleString('en')} stops, ${figures.fileMb} MB (generated and streamed to disk in ${figures.generateS} s)`);
  console.log(`  run:      ${figures.wallS} s wall, peak RSS ${figures.peakRssMb} MB${maxOldSpace ? ` (heap limit ${maxOldSpace} MB)` : ''}`);
  console.log(`  outcome:  ${outcome}`);
  console.log(`  output:   ${figures.message}`);
}
if (!keep) rmSync(dir, { recursive: true, force: true });
else console.log(`  kept:     ${file}`);
process.exitCode = oom || (run.code !== 0 && run.code !== 2) ? 1 : 0;
