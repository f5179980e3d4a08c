import { mkdtempSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { createProject } from '../../src/api/project.js';
import { AppSession, type SessionOptions } from '../../src/api/session.js';

/** A CSV of n stops around Leipzig, spread over a few clusters; the same text every time. */
export function stopsCsv(n: number, seed = 7): string {
  let s = seed >>> 0;
  const next = (): number => {
    s = (Math.imul(s, 1664525) + 1013904223) >>> 0;
    return s / 2 ** 32;
  };
  const centres = [
    [12.37, 51.34],
    [12.6, 51.5],
    [12.1, 51.2],
    [12.8, 51.25],
  ];
  const lines = ['id,lat,lon,demand'];
  for (let i = 0; i < n; i++) {
    const c = centres[i % centres.length]!;
    lines.push(`S${i + 1},${(c[1]! + (next() - 0.5) * 0.2).toFixed(6)},${(c[0]! + (next() - 0.5) * 0.3).toFixed(6)},${1 + Math.floor(next() * 4)}`);
  }
  return `${lines.join('\n')}\n`;
}

export function tempDir(prefix: string): string {
  return mkdtempSync(path.join(tmpdir(), `zoneplan-${prefix}-`));
}

/** A session on a new, empty project in a temporary folder. */
export async function emptySession(options: Partial<SessionOptions> = {}): Promise<{ session: AppSession; dir: string; file: string }> {
  const dir = tempDir('session');
  const file = path.join(dir, 'test.zoneplan');
  await createProject(file);
  const session = new AppSession({ mode: 'browser', ...options });
  await session.open(file);
  return { session, dir, file };
}

/**
 * Watches this thread with a 10 ms timer: the longest time between two ticks is how long the
 * thread was held (a solve on it would show as one long gap). stop() ends the watch.
 */
export function watchThread(): { readonly ticks: number; readonly longestGapMs: number; stop(): void } {
  let last = performance.now();
  const w = { ticks: 0, longestGapMs: 0, stop: () => clearInterval(timer) };
  const timer = setInterval(() => {
    const t = performance.now();
    w.longestGapMs = Math.max(w.longestGapMs, t - last);
    last = t;
    w.ticks++;
  }, 10);
  return w;
}
