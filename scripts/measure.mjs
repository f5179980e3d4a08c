// Shared by scripts/stress-import.mjs and scripts/load-check.mjs: the deterministic stops CSV
// generator (streamed to disk, never held in memory) and child processes run with their wall
// time and peak RSS measured.
//
// Peak RSS comes from GNU time (/usr/bin/time -f "%e %M": elapsed s, max RSS KB) when present,
// else from polling /proc/PID/status (VmHWM) while the child runs. For processes that are not
// started here (Chromium's), peakOfTree() polls VmHWM of a process and all its descendants.
import { spawn } from 'node:child_process';
import { createWriteStream, existsSync, readdirSync, readFileSync, statSync } from 'node:fs';
import path from 'node:path';
import { fileURLToPath } from 'node:url';

export const root = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '..');
export const GIB = 2 ** 30;

/** "2G", "400m", "1.5k", "123" -> bytes. */
export function parseSize(s) {
  const m = /^(\d+(?:\.\d+)?)([kmg]?)b?$/i.exec(String(s));
  if (!m) throw new Error(`not a size: ${s}`);
  return Math.round(Number(m[1]) * { '': 1, k: 2 ** 10, m: 2 ** 20, g: 2 ** 30 }[m[2].toLowerCase()]);
}

/**
 * Writes a stops CSV (stop_id,lat,lon,demand) through a stream with back-pressure: 400 clustered
 * towns in central Europe, skewed demand (1 + floor of an exponential with mean 3, about 3.54 a
 * stop), deterministic (the same file for the same count). Stops until `stops` rows, or until
 * `bytes` bytes when `stops` is null.
 */
export async function generateStopsCsv(file, { stops = null, bytes = null } = {}) {
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
    if (stops !== null ? i >= stops : written >= bytes) break;
    let chunk = '';
    for (let k = 0; k < 20_000; k++, i++) {
      if (stops !== null && i >= stops) break;
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

/** VmHWM (peak resident set) of a live process in KB, or 0 when it is gone. */
export function vmHwmKb(pid) {
  try {
    const m = /VmHWM:\s+(\d+)/.exec(readFileSync(`/proc/${pid}/status`, 'utf8'));
    return m ? Number(m[1]) : 0;
  } catch {
    return 0;
  }
}

/** Proportional set size of a live process in KB (shared pages divided among their users), or 0. */
function pssKb(pid) {
  try {
    const m = /^Pss:\s+(\d+)/m.exec(readFileSync(`/proc/${pid}/smaps_rollup`, 'utf8'));
    return m ? Number(m[1]) : 0;
  } catch {
    return 0;
  }
}

/** The pids of a process and all its live descendants (from /proc/PID/stat's parent field). */
export function processTree(pid) {
  const children = new Map();
  for (const e of readdirSync('/proc')) {
    if (!/^\d+$/.test(e)) continue;
    try {
      const stat = readFileSync(`/proc/${e}/stat`, 'utf8');
      const ppid = Number(stat.slice(stat.lastIndexOf(')') + 2).split(' ')[1]);
      if (!children.has(ppid)) children.set(ppid, []);
      children.get(ppid).push(Number(e));
    } catch {
      /* gone */
    }
  }
  const out = [];
  const todo = [pid];
  while (todo.length) {
    const p = todo.pop();
    out.push(p);
    todo.push(...(children.get(p) ?? []));
  }
  return out;
}

/** Live child processes of `pid` whose command line matches `pattern`. */
export function childProcesses(pid, pattern) {
  const out = [];
  for (const e of readdirSync('/proc')) {
    if (!/^\d+$/.test(e)) continue;
    try {
      const stat = readFileSync(`/proc/${e}/stat`, 'utf8');
      if (Number(stat.slice(stat.lastIndexOf(')') + 2).split(' ')[1]) !== pid) continue;
      if (pattern.test(readFileSync(`/proc/${e}/cmdline`, 'utf8').replace(/\0/g, ' '))) out.push(Number(e));
    } catch {
      /* gone */
    }
  }
  return out;
}

/**
 * Polls a process tree (e.g. Chromium's browser, renderer, GPU and utility processes) every
 * `intervalMs` until stop() is called. stop() returns, in MB, the largest single process's peak
 * (VmHWM) and the largest sampled sum of the tree's proportional set sizes (Pss: shared pages
 * divided among the processes, so the libraries every Chromium process maps count once), and
 * how many processes were seen.
 */
export function peakOfTree(pid, intervalMs = 100) {
  const hwm = new Map();
  let maxPssKb = 0;
  const sample = () => {
    let sum = 0;
    for (const p of processTree(pid)) {
      const h = vmHwmKb(p);
      if (h > (hwm.get(p) ?? 0)) hwm.set(p, h);
      sum += pssKb(p);
    }
    maxPssKb = Math.max(maxPssKb, sum);
  };
  sample();
  const timer = setInterval(sample, intervalMs);
  return {
    stop() {
      sample();
      clearInterval(timer);
      return { largestProcessMb: Math.max(0, ...hwm.values()) / 1024, peakTotalPssMb: maxPssKb / 1024, processes: hwm.size };
    },
  };
}

/**
 * Runs a command (argv array) to its end: { code, signal, wallS, peakRssMb, stdout, stderr,
 * timedOut }. A child still running after `timeoutMs` is killed, with its descendants.
 */
export function runMeasured(argv, { cwd = root, env = process.env, timeoutMs = 0 } = {}) {
  const gnuTime = existsSync('/usr/bin/time');
  const cmd = gnuTime ? ['/usr/bin/time', '-f', '@@time %e %M', ...argv] : argv;
  return new Promise((resolve) => {
    const t0 = performance.now();
    const child = spawn(cmd[0], cmd.slice(1), { cwd, env, stdio: ['ignore', 'pipe', 'pipe'] });
    let stdout = '';
    let stderr = '';
    let hwmKb = 0;
    let timedOut = false;
    child.stdout.on('data', (d) => (stdout += d));
    child.stderr.on('data', (d) => (stderr += d));
    const poll = gnuTime ? null : setInterval(() => (hwmKb = Math.max(hwmKb, vmHwmKb(child.pid))), 50);
    const timer =
      timeoutMs > 0
        ? setTimeout(() => {
            timedOut = true;
            // GNU time and the command under it (and anything that one started), by pid.
            for (const pid of processTree(child.pid).reverse()) {
              try {
                process.kill(pid, 'SIGKILL');
              } catch {
                /* gone */
              }
            }
          }, timeoutMs)
        : null;
    child.on('close', (code, signal) => {
      if (poll) clearInterval(poll);
      if (timer) clearTimeout(timer);
      const wallS = (performance.now() - t0) / 1000;
      const m = /@@time ([\d.]+) (\d+)/.exec(stderr);
      if (m) {
        hwmKb = Number(m[2]);
        stderr = stderr.replace(/@@time [\d.]+ \d+\n?/, '');
      }
      // GNU time reports a child killed by a signal as "Command terminated by signal N".
      const bySignal = /Command terminated by signal (\d+)/.exec(stderr)?.[1];
      const sig = signal ?? (bySignal ? `signal ${bySignal}` : null);
      // Those lines are GNU time's, not the child's.
      stderr = stderr.replace(/^Command (exited with non-zero status \d+|terminated by signal \d+)\n?/m, '');
      resolve({ code, signal: sig, wallS, peakRssMb: hwmKb / 1024, stdout, stderr, timedOut });
    });
  });
}

/** Runs the zoneplan command line (default bin/zoneplan.js: dist/ when built) under runMeasured. */
export function runZoneplan(cliArgs, { cli = path.join(root, 'bin', 'zoneplan.js'), maxOldSpace = null, ...options } = {}) {
  const node = [process.execPath, ...(maxOldSpace ? [`--max-old-space-size=${maxOldSpace}`] : []), cli, ...cliArgs];
  return runMeasured(node, options);
}

/** True when a run ended in V8's out-of-memory abort (or any SIGABRT). */
export function isOomCrash(run) {
  return run.code === 134 || /heap out of memory|Reached heap limit|FATAL ERROR/i.test(run.stderr) || run.signal === 'SIGABRT' || run.signal === 'signal 6';
}

/** completed / refused (exit 2) / OUT OF MEMORY CRASH / failed (exit N, signal). */
export function outcomeOf(run) {
  const oom = isOomCrash(run);
  if (run.timedOut) return 'TIMED OUT (killed)';
  if (run.code === 0) return 'completed';
  if (run.code === 2 && !oom) return 'refused (exit 2)';
  if (oom) return 'OUT OF MEMORY CRASH';
  return `failed (exit ${run.code}${run.signal ? `, ${run.signal}` : ''})`;
}

/**
 * The first lines of what a run printed, for a report: stdout when it completed (stderr when
 * stdout is a --json report), else stderr.
 */
export function messageOf(run, lines = 3, chars = 400) {
  const text = run.code === 0 && !/^\s*[{[]/.test(run.stdout) ? run.stdout : run.stderr;
  return text.trim().split('\n').slice(0, lines).join(' | ').slice(0, chars);
}
