/**
 * The hostile corpus through the app's import panel: every stops file of test/fixtures/hostile
 * sent as the window sends a dropped or chosen file (its bytes, base64) to AppSession.importStops.
 * The expected outcome of each file is the manifest's (test/fixtures/hostile/manifest.json, the
 * same as for the CLI and the file readers): refused with the row or feature and field named and
 * nothing added to the project, or imported with the stated number of stops and warnings.
 */
import { readFileSync } from 'node:fs';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { AppSession } from '../../src/api/session.js';
import { HOSTILE_DIR, type HostileCase } from '../fixtures/hostile/make.js';
import { emptySession } from '../app/helpers.js';

const manifest = (JSON.parse(readFileSync(path.join(HOSTILE_DIR, 'manifest.json'), 'utf8')) as HostileCase[]).filter((c) => c.kind === 'stops');

let session: AppSession;
beforeAll(async () => {
  session = (await emptySession()).session;
});
afterAll(async () => {
  await session.close();
});

describe('the hostile corpus through the app import panel (bytes as the window sends them)', () => {
  it('has the stops files of the corpus', () => {
    expect(manifest.length).toBeGreaterThanOrEqual(40);
  });

  for (const c of manifest) {
    it(`${c.file}: ${c.expect} (${c.breaks})`, async () => {
      const base64 = readFileSync(path.join(HOSTILE_DIR, c.file)).toString('base64');
      const before = (await session.project()).stopSets.length;
      const out = await session.importStops({ name: c.file, base64 });
      const after = (await session.project()).stopSets.length;
      if (c.expect === 'error') {
        expect(out.ok).toBe(false);
        if (out.ok) return;
        expect(after).toBe(before);
        expect(out.errorCount).toBeGreaterThan(0);
        const first = out.problems.find((p) => p.severity === 'error')!;
        expect(first.file).toBe(c.file);
        if (c.code) expect(first.code).toBe(c.code);
        if (c.row !== undefined) expect(first.row).toBe(c.row);
        if (c.feature !== undefined) expect(first.feature).toBe(c.feature);
        if (c.field) expect(first.field).toBe(c.field);
        if (c.message) expect(first.message).toMatch(new RegExp(c.message, 'i'));
      } else {
        expect(out.ok, out.ok ? '' : out.problems.map((p) => p.message).join('; ')).toBe(true);
        if (!out.ok) return;
        expect(after).toBe(before + 1);
        if (c.count !== undefined) expect(out.stopSet.stops).toBe(c.count);
        if (c.expect === 'warning' && c.code) expect(out.stopSet.warnings.map((w) => w.code)).toContain(c.code);
      }
    });
  }
});
