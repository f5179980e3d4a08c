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
// else from polling /proc/PID/status (VmHWM) while the child runs (scripts/measure.mjs, shared with
// scripts/load-check.mjs).
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { generateStopsCsv, isOomCrash, messageOf, outcomeOf, parseSize, runZoneplan } from './measure.mjs';

const dashes = process.argv.indexOf('--');
const args = process.argv.slice(2, dashes < 0 ? undefined : dashes);
/** Everything after "--" goes to the zoneplan command as it is (e.g. -- --capacity 40000). */
const extra = dashes < 0 ? [] : process.argv.slice(dashes + 1);
const opt = (name, fallback) => {
  const i = args.indexOf(`--${name}`);
  return i >= 0 ? (args[i + 1] && !args[i + 1].startsWith('--') ? args[i + 1] : true) : fallback;
};

const bytesWanted = opt('bytes', null) ? parseSize(opt('bytes')) : null;
const stopsWanted = bytesWanted ? null : Number(opt('stops', 5_000_000));
const planZones = opt('plan', null);
const keep = opt('keep', false) === true;
const json = opt('json', false) === true;
const maxOldSpace = opt('max-old-space', null);
const dir = opt('dir', null) || mkdtempSync(path.join(tmpdir(), 'zoneplan-stress-'));
const file = path.join(dir, 'stress-stops.csv');

const gen = await generateStopsCsv(file, { stops: stopsWanted, bytes: bytesWanted });
const cliArgs = [
  ...(planZones ? ['plan', file, '--zones', String(planZones), '--quiet', ...(opt('out', false) ? ['--out', path.join(dir, 'stress-plan.geojson')] : [])] : ['check', file]),
  ...extra,
];
const run = await runZoneplan(cliArgs, { cli: opt('cli', null) || undefined, maxOldSpace });
const oom = isOomCrash(run);
const outcome = outcomeOf(run);
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
  message: messageOf(run),
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
