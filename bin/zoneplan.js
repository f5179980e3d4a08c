#!/usr/bin/env node
// The zoneplan command: the built bundle (npm run build, run by npm install / npm ci),
// or the TypeScript source through tsx when no build is present.
import { existsSync } from 'node:fs';

const built = new URL('../dist/node/zoneplan.mjs', import.meta.url);
if (existsSync(built) && !process.env.ZONEPLAN_FROM_SOURCE) {
  await import(built.href);
} else {
  const { register } = await import('tsx/esm/api');
  register();
  await import(new URL('../src/cli/zoneplan.ts', import.meta.url).href);
}
