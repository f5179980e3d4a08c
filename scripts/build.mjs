// Builds the command line (and its start worker) into dist/. Run by `npm run build` and by
// npm's "prepare" step on `npm install` / `npm ci`, so that `npx zoneplan` works from a checkout.
import * as esbuild from 'esbuild';
import { readFileSync, rmSync } from 'node:fs';

// Packages stay external (loaded from node_modules), except data that is bundled in.
const pkg = JSON.parse(readFileSync('package.json', 'utf8'));
const bundled = new Set(['world-atlas']);
const external = [...Object.keys(pkg.dependencies ?? {}), ...Object.keys(pkg.devDependencies ?? {})].filter((d) => !bundled.has(d));

rmSync('dist/node', { recursive: true, force: true });
await esbuild.build({
  entryPoints: { zoneplan: 'src/cli/zoneplan.ts', 'start-worker': 'src/run/start-worker.ts', lib: 'src/lib.ts' },
  outdir: 'dist/node',
  outExtension: { '.js': '.mjs' },
  bundle: true,
  format: 'esm',
  platform: 'node',
  target: 'node20',
  external,
  sourcemap: true,
  logLevel: 'warning',
});

// The map window's bundle (renderer/) and the desktop shell (src/desktop/) have their own build
// steps, run when their sources exist.
const { existsSync } = await import('node:fs');
if (existsSync('scripts/build-renderer.mjs')) await import('./build-renderer.mjs');
if (existsSync('scripts/build-desktop.mjs')) await import('./build-desktop.mjs');
