// Builds the map window (renderer/) into dist/renderer: one IIFE script (an ES module bundle is
// blocked over file:// in Chromium, and the desktop window loads the page from a file), the
// style sheet esbuild extracts from the CSS imports (Leaflet's and ours), Leaflet's images, and
// index.html. Imported by scripts/build.mjs; also runnable alone: node scripts/build-renderer.mjs
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
