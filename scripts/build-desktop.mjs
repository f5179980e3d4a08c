// Builds the desktop shell into dist/main (Electron main as ESM, the sandboxed preload as one
// CommonJS file that only requires electron) and the app's workers (plan runs, sweeps, zone
// polygons redrawn after edits, rebalances, exports and imports of large files) beside each bundle that starts them (dist/main for the desktop
// app, dist/node for `zoneplan serve`). Run by build.mjs.
import * as esbuild from 'esbuild';
import { readFileSync, rmSync } from 'node:fs';

const pkg = JSON.parse(readFileSync('package.json', 'utf8'));
const bundled = new Set(['world-atlas']);
const external = [...Object.keys(pkg.dependencies ?? {}), ...Object.keys(pkg.devDependencies ?? {})].filter((d) => !bundled.has(d));
const node = { bundle: true, platform: 'node', target: 'node20', external, logLevel: 'warning' };

const selfContained = {
  bundle: true,
  platform: 'node',
  target: 'node20',
  format: 'esm',
  sourcemap: true,
  logLevel: 'warning',
  // CommonJS packages inside an ES module bundle may require Node's own modules.
  banner: { js: "import { createRequire as zoneplanCreateRequire } from 'node:module'; const require = zoneplanCreateRequire(import.meta.url);" },
};

rmSync('dist/main', { recursive: true, force: true });
await Promise.all([
  esbuild.build({ ...node, entryPoints: ['src/desktop/main.ts'], outfile: 'dist/main/main.js', format: 'esm', sourcemap: true }),
  esbuild.build({ ...node, entryPoints: ['src/desktop/preload.ts'], outfile: 'dist/main/preload.cjs', format: 'cjs', external: ['electron'], sourcemap: 'inline' }),
  // The desktop app's workers carry their packages inside (no node_modules lookups), so that they
  // also run unpacked from the app archive (electron-builder.yml asarUnpack).
  ...['plan-worker', 'sweep-worker', 'boundaries-worker', 'rebalance-worker', 'export-worker', 'import-worker'].flatMap((name) => [
    esbuild.build({ ...selfContained, entryPoints: [`src/run/${name}.ts`], outfile: `dist/main/${name}.mjs` }),
    esbuild.build({ ...node, entryPoints: [`src/run/${name}.ts`], outfile: `dist/node/${name}.mjs`, format: 'esm', sourcemap: true }),
  ]),
  esbuild.build({ ...selfContained, entryPoints: ['src/run/start-worker.ts'], outfile: 'dist/main/start-worker.mjs' }),
]);
