import { readdirSync, readFileSync } from 'node:fs';
import { createRequire } from 'node:module';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import { APP_INDEX_URL } from '../../src/desktop/app-protocol.js';

/**
 * The fuses the packaged app must have, by electron-builder's names (electronFuses, FuseOptionsV1
 * in app-builder-lib's scheme.json; each maps to a fuse of @electron/fuses' V1 wire).
 */
const FUSES: Record<string, boolean> = {
  // ELECTRON_RUN_AS_NODE ignored: the app binary is no general Node runtime.
  runAsNode: false,
  // The cookie store on disk encrypted with the OS key store.
  enableCookieEncryption: true,
  // NODE_OPTIONS / NODE_EXTRA_CA_CERTS ignored: nothing injected from the environment.
  enableNodeOptionsEnvironmentVariable: false,
  // --inspect and SIGUSR1 open no debugger in the main process.
  enableNodeCliInspectArguments: false,
  // app.asar checked against its recorded hash when read (macOS, Windows).
  enableEmbeddedAsarIntegrityValidation: true,
  // App code only from app.asar, so nothing unchecked can be loaded beside it.
  onlyLoadAppFromAsar: true,
  // file:// pages get no extra privileges: the window loads from the app scheme instead.
  grantFileProtocolExtraPrivileges: false,
};

/**
 * The `key: value` lines of one top-level block of a YAML file (the block style the config is
 * written in: two-space indent, scalar values, # comments). Not a YAML parser: a config written
 * another way for this block fails the test rather than passing it unread.
 */
function topLevelBlock(text: string, key: string): { entries: [string, string][]; count: number } {
  const lines = text.split(/\r?\n/);
  const starts = lines.flatMap((l, i) => (new RegExp(`^${key}:\\s*(#.*)?$`).test(l) ? [i] : []));
  const entries: [string, string][] = [];
  if (starts.length !== 1) return { entries, count: starts.length };
  for (const line of lines.slice(starts[0]! + 1)) {
    if (/^\s*(#.*)?$/.test(line)) continue;
    if (!/^\s/.test(line)) break;
    const m = /^ {2}([A-Za-z][A-Za-z0-9]*):\s*([^#\s]+)\s*(#.*)?$/.exec(line);
    if (!m) throw new Error(`${key}: a line this test cannot read: ${JSON.stringify(line)}`);
    entries.push([m[1]!, m[2]!]);
  }
  return { entries, count: 1 };
}

/** electron-builder's config schema, from the app-builder-lib that the installed electron-builder uses. */
function builderSchema(): { properties: Record<string, unknown>; definitions: Record<string, { properties?: Record<string, { type?: string }>; additionalProperties?: boolean }> } {
  const require = createRequire(import.meta.url);
  const fromBuilder = createRequire(require.resolve('electron-builder/package.json'));
  return JSON.parse(readFileSync(fromBuilder.resolve('app-builder-lib/scheme.json'), 'utf8')) as ReturnType<typeof builderSchema>;
}

describe('packaging: Electron fuses and ASAR integrity (electron-builder.yml)', () => {
  const config = readFileSync('electron-builder.yml', 'utf8');

  it('sets every fuse of the security checklist, by the schema\'s names, to the intended value', () => {
    const schema = builderSchema();
    // electronFuses is FuseOptionsV1 (or null): follow the schema's reference rather than assume it.
    const ref = JSON.stringify(schema.properties['electronFuses']).match(/#\/definitions\/(\w+)/)?.[1];
    expect(ref).toBe('FuseOptionsV1');
    const options = schema.definitions[ref!]!;
    expect(options.additionalProperties).toBe(false);
    for (const name of Object.keys(FUSES)) expect(options.properties?.[name]?.type, name).toBe('boolean');

    const { entries, count } = topLevelBlock(config, 'electronFuses');
    expect(count).toBe(1);
    const names = entries.map(([k]) => k);
    expect(new Set(names).size, 'a fuse set twice').toBe(names.length);
    for (const [k, v] of entries) {
      expect(Object.keys(options.properties ?? {}), `unknown fuse ${k}`).toContain(k);
      expect(['true', 'false'], `${k}: ${v}`).toContain(v);
    }
    expect(Object.fromEntries(entries.map(([k, v]) => [k, v === 'true']))).toEqual(FUSES);
  });

  it('packs the app into an asar archive, which the integrity check and asar-only loading need', () => {
    expect(config).toMatch(/^asar: true\s*$/m);
  });

  it('needs neither file:// privileges nor ELECTRON_RUN_AS_NODE', () => {
    // The window loads from the app scheme (grantFileProtocolExtraPrivileges: false).
    expect(APP_INDEX_URL).toMatch(/^zoneplan-app:\/\//);
    // Nothing in the app starts a child process (runAsNode: false breaks child_process.fork of the app).
    const sources = (dir: string): string[] =>
      readdirSync(dir, { withFileTypes: true }).flatMap((d) => (d.isDirectory() ? sources(path.join(dir, d.name)) : d.name.endsWith('.ts') ? [path.join(dir, d.name)] : []));
    const spawning = sources('src').filter((f) => /from ['"](node:)?child_process['"]/.test(readFileSync(f, 'utf8')));
    expect(spawning).toEqual([]);
  });
});
