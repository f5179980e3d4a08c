/**
 * Helpers of the hardening tests: the command line as a child process (built from the current
 * source into a private bundle, so that the test checks this tree and not a stale dist/), a
 * temporary folder, and the checks every bad-input run must pass.
 */
import { spawn } from 'node:child_process';
import { existsSync, mkdirSync, mkdtempSync, readdirSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { expect } from 'vitest';

export const ROOT = path.resolve(import.meta.dirname, '../..');

export function tempDir(prefix: string): { dir: string; file: (name: string) => string; cleanup: () => void } {
  const dir = mkdtempSync(path.join(tmpdir(), `zoneplan-${prefix}-`));
  return { dir, file: (name) => path.join(dir, name), cleanup: () => rmSync(dir, { recursive: true, force: true }) };
}

/**
 * Bundles src/cli/zoneplan.ts (and the start worker) with esbuild into node_modules/.cache, all
 * packages inlined except better-sqlite3 (native): one file loads about twice as fast as the
 * dist/ build with its packages external, which matters for a hundred runs. The bundle must sit
 * under the checkout so that better-sqlite3 resolves from node_modules.
 * ZONEPLAN_HARDENING_CLI=dist runs bin/zoneplan.js (dist/, or the source through tsx) instead.
 */
export async function buildCli(): Promise<{ command: string[]; cleanup: () => void }> {
  if (process.env['ZONEPLAN_HARDENING_CLI'] === 'dist') return { command: [path.join(ROOT, 'bin', 'zoneplan.js')], cleanup: () => {} };
  const cache = path.join(ROOT, 'node_modules', '.cache');
  mkdirSync(cache, { recursive: true });
  const outdir = mkdtempSync(path.join(cache, 'zoneplan-hardening-'));
  const esbuild = await import('esbuild');
  await esbuild.build({
    absWorkingDir: ROOT,
    entryPoints: { zoneplan: 'src/cli/zoneplan.ts', 'start-worker': 'src/run/start-worker.ts' },
    outdir,
    outExtension: { '.js': '.mjs' },
    bundle: true,
    format: 'esm',
    platform: 'node',
    target: 'node20',
    external: ['better-sqlite3', 'electron'],
    logLevel: 'error',
    // CommonJS packages inlined into an ES module call require().
    banner: { js: "import { createRequire as __zpCreateRequire } from 'node:module'; const require = __zpCreateRequire(import.meta.url);" },
  });
  return { command: [path.join(outdir, 'zoneplan.mjs')], cleanup: () => rmSync(outdir, { recursive: true, force: true }) };
}

export interface CliRun {
  readonly code: number | null;
  readonly signal: NodeJS.Signals | null;
  readonly stdout: string;
  readonly stderr: string;
}

/** At most this many CLI children at a time (the machines have two cores). */
const POOL = 2;
let running = 0;
const queue: (() => void)[] = [];

/** Runs `node <cli> ...args`; resolves with the exit code and both outputs. */
export async function runCli(command: readonly string[], args: readonly string[], options: { cwd?: string; env?: NodeJS.ProcessEnv; timeoutMs?: number } = {}): Promise<CliRun> {
  if (running >= POOL) await new Promise<void>((resolve) => queue.push(resolve));
  running++;
  try {
    return await new Promise<CliRun>((resolve, reject) => {
      const env = { ...process.env, ...options.env };
      delete env['ZONEPLAN_DEBUG'];
      const child = spawn(process.execPath, [...command, ...args], { cwd: options.cwd ?? ROOT, env, stdio: ['ignore', 'pipe', 'pipe'] });
      let stdout = '';
      let stderr = '';
      child.stdout.setEncoding('utf8').on('data', (s: string) => (stdout += s));
      child.stderr.setEncoding('utf8').on('data', (s: string) => (stderr += s));
      const timer = setTimeout(() => child.kill('SIGKILL'), options.timeoutMs ?? 60_000);
      child.on('error', reject);
      child.on('close', (code, signal) => {
        clearTimeout(timer);
        resolve({ code, signal, stdout, stderr });
      });
    });
  } finally {
    running--;
    queue.shift()?.();
  }
}

/** A stack frame line as Node prints them. */
export const STACK_LINE = /^\s+at .+(:\d+:\d+\)?|\(native\)|\(<anonymous>\))$/m;

/** The checks of every run on bad input: exit 2, no stack trace, no internal error, nothing written. */
export function expectCleanRefusal(run: CliRun, outputs: readonly string[], label: string): void {
  const all = `${run.stdout}\n${run.stderr}`;
  expect(run.code, `${label}: exit code\n${all}`).toBe(2);
  expect(all, `${label}: stack trace`).not.toMatch(STACK_LINE);
  expect(all, `${label}: internal error`).not.toMatch(/internal error/);
  for (const f of outputs) expect(existsSync(f), `${label}: ${f} must not be written`).toBe(false);
}

/** Files in a folder other than the expected ones (temporary files left behind by a failed write). */
export function strayFiles(dir: string, expected: readonly string[] = []): string[] {
  return readdirSync(dir).filter((f) => !expected.includes(f));
}
