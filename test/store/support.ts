import { spawn, type ChildProcessWithoutNullStreams } from 'node:child_process';
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import type { CliIo } from '../../src/cli/main.js';

export const root = path.resolve(import.meta.dirname, '../..');

export function tempDir(prefix: string): { dir: string; file: (name: string) => string; cleanup: () => void } {
  const dir = mkdtempSync(path.join(tmpdir(), `zoneplan-${prefix}-`));
  return { dir, file: (name) => path.join(dir, name), cleanup: () => rmSync(dir, { recursive: true, force: true }) };
}

/** A TypeScript script of test/store run in its own Node process (through tsx), its stdout read line by line. */
export interface Child {
  readonly process: ChildProcessWithoutNullStreams;
  /** Complete lines printed so far. */
  readonly lines: string[];
  stderr(): string;
  /** Resolves once `count` lines have arrived (rejects if the child ends first). */
  waitForLines(count: number): Promise<void>;
  /** Resolves with the exit code and signal. */
  exited: Promise<{ code: number | null; signal: NodeJS.Signals | null }>;
}

export function runChild(script: string, args: readonly string[]): Child {
  const proc = spawn(process.execPath, ['--import', 'tsx', path.join(root, 'test', 'store', script), ...args], { cwd: root, stdio: ['pipe', 'pipe', 'pipe'] });
  const lines: string[] = [];
  let partial = '';
  let err = '';
  const waiters: { count: number; resolve: () => void; reject: (e: Error) => void }[] = [];
  let ended = false;
  const settle = (): void => {
    for (let w = waiters.length - 1; w >= 0; w--) {
      const waiter = waiters[w]!;
      if (lines.length >= waiter.count) {
        waiters.splice(w, 1);
        waiter.resolve();
      } else if (ended) {
        waiters.splice(w, 1);
        waiter.reject(new Error(`child ${script} ended after ${lines.length} lines: ${err}`));
      }
    }
  };
  proc.stdout.setEncoding('utf8');
  proc.stdout.on('data', (chunk: string) => {
    const parts = (partial + chunk).split('\n');
    partial = parts.pop()!; // an unfinished line (the kill may cut one) is not counted
    lines.push(...parts);
    settle();
  });
  proc.stderr.setEncoding('utf8');
  proc.stderr.on('data', (chunk: string) => (err += chunk));
  const exited = new Promise<{ code: number | null; signal: NodeJS.Signals | null }>((resolve) =>
    proc.on('close', (code, signal) => {
      ended = true;
      settle();
      resolve({ code, signal });
    }),
  );
  return {
    process: proc,
    lines,
    stderr: () => err,
    waitForLines: (count) => new Promise<void>((resolve, reject) => {
      waiters.push({ count, resolve, reject });
      settle();
    }),
    exited,
  };
}

export function capture(): CliIo & { stdout: () => string; stderr: () => string } {
  let out = '';
  let err = '';
  return { out: (s) => (out += s), err: (s) => (err += s), isTty: false, stdout: () => out, stderr: () => err };
}
