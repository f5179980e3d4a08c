// Builds the map window (renderer/) into dist/renderer: one IIFE script (index.html loads it as a
// classic deferred script, in the desktop window from the zoneplan-app:// scheme of
// src/desktop/app-protocol.ts and in browser mode over http), the style sheet esbuild extracts
// from the CSS imports (Leaflet's and ours), Leaflet's images, and index.html. Imported by
// scripts/build.mjs; also runnable alone: node scripts/build-renderer.mjs
import * as esbuild from 'esbuild';
import { cpSync, mkdirSync, rmSync } from 'node:fs';

rmSync('dist/renderer', { recursive: true, force: true });
mkdirSync('dist/renderer', { recursive: true });
await esbuild.build({
  entryPoints: ['renderer/main.ts'],
  outdir: 'dist/renderer',
  bundle: true,
  format: 'iife',
  platform: 'browser',
  target: 'chrome120',
  sourcemap: true,
  minify: true,
  loader: { '.png': 'file', '.svg': 'file' },
  assetNames: 'assets/[name]-[hash]',
  logLevel: 'warning',
});
cpSync('renderer/index.html', 'dist/renderer/index.html');
