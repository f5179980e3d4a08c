// Electron main process of the desktop app (bundled to dist/main/main.js).
import * as electron from 'electron';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import type { ElectronLike } from './electron-like.js';
import { startDesktop } from './desktop-app.js';

const distDir = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '..');
const project = process.argv.slice(1).find((a) => a.toLowerCase().endsWith('.zoneplan'));
await startDesktop(electron as unknown as ElectronLike, { distDir, ...(project ? { project } : {}) });
