import { spawn } from 'node:child_process';
import { chmodSync, mkdirSync, symlinkSync, writeFileSync } from 'node:fs';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
// @ts-expect-error: a plain ES module script without type declarations
import { findElectronBinary } from '../../scripts/start.mjs';
import { tempDir } from '../app/helpers.js';

type Found = { ok: true; exe: string } | { ok: false; why: string };
const find = findElectronBinary as (env: NodeJS.ProcessEnv) => Found;

describe('npm start: finding the Electron runtime by its files', () => {
  it('reports the runtime as missing here (the electron package has no downloaded binary)', () => {
    const r = find({});
    expect(r.ok).toBe(false);
    if (!r.ok) expect(r.why).toMatch(/path\.txt|not installed|missing/);
  });

  it('finds an executable given by ELECTRON_OVERRIDE_DIST_PATH, and says when it is not there', () => {
    const dir = tempDir('electron-dist');
    expect(find({ ELECTRON_OVERRIDE_DIST_PATH: dir }).ok).toBe(false);
    const exe = path.join(dir, 'electron');
    writeFileSync(exe, '#!/bin/sh\nexit 0\n');
    chmodSync(exe, 0o755);
    expect(find({ ELECTRON_OVERRIDE_DIST_PATH: dir })).toEqual({ ok: true, exe });
  });
});

describe('npm start without the Electron runtime', () => {
  it('says so in one line and starts browser mode, also from a path with a space and a link in it', async () => {
    // The project reached through a folder whose name has a space, by a symbolic link.
    const outer = path.join(tempDir('start'), 'my projects');
    mkdirSync(outer);
    const link = path.join(outer, 'zoneplan');
    symlinkSync(path.resolve('.'), link, 'dir');
    const child = spawn(process.execPath, [path.join(link, 'scripts', 'start.mjs')], {
      env: { ...process.env, ZONEPLAN_DATA_DIR: tempDir('start-data'), PORT: '0' },
      stdio: ['ignore', 'pipe', 'pipe'],
    });
    let out = '';
    let err = '';
    child.stdout.on('data', (b: Buffer) => (out += b.toString()));
    child.stderr.on('data', (b: Buffer) => (err += b.toString()));
    try {
      const url = await new Promise<string>((resolve, reject) => {
        const timer = setTimeout(() => reject(new Error(`no URL within 30 s\nstdout: ${out}\nstderr: ${err}`)), 30_000);
        child.stdout.on('data', () => {
          const line = out.split('\n').find((l) => /^http:\/\/127\.0\.0\.1:\d+\/\?token=\S+$/.test(l.trim()));
          if (line) {
            clearTimeout(timer);
            resolve(line.trim());
          }
        });
        child.on('exit', (code) => reject(new Error(`start exited (${code})\nstdout: ${out}\nstderr: ${err}`)));
      });
      const lines = err.trim().split('\n').filter((l) => l.startsWith('[start]'));
      expect(lines).toHaveLength(1);
      expect(lines[0]).toMatch(/^\[start\] .*(not installed|missing).*; starting browser mode instead/);
      // The server answers with the token from the printed URL.
      const u = new URL(url);
      const res = await fetch(`${u.origin}/api/call/mode`, { method: 'POST', headers: { 'x-zoneplan-token': u.searchParams.get('token')!, 'content-type': 'application/json' }, body: JSON.stringify({ args: [] }) });
      expect(await res.json()).toEqual({ ok: true, value: 'browser' });
    } finally {
      child.kill('SIGTERM');
    }
  }, 60_000);
});
