import { chmodSync, writeFileSync } from 'node:fs';
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
