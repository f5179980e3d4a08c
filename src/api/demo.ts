import { existsSync, linkSync, mkdirSync, rmSync } from 'node:fs';
import path from 'node:path';
import { readStopsFile } from '../io/read.js';
import { appRoot } from './app-paths.js';
import { boundariesGeoJson } from './boundaries-json.js';
import { solveStops } from './plan-file.js';
import { createProject, openProject } from './project.js';

export const DEMO_PROJECT_NAME = 'tallowmere-demo.zoneplan';
export const DEMO_PLAN_NAME = 'demo: 12 zones';

/**
 * The demo project the app opens on the first start: the invented Tallowmere parcel stops with
 * one solved plan of 12 zones whose workloads lie within ±10% of the mean. Made once in `dir`; an existing one is used as it is.
 */
export async function ensureDemoProject(dir: string, stopsFile = path.join(appRoot(), 'demo-data', 'tallowmere-stops.csv')): Promise<string> {
  const file = path.join(dir, DEMO_PROJECT_NAME);
  if (existsSync(file)) return file;
  mkdirSync(dir, { recursive: true });
  const stops = { ...readStopsFile(stopsFile, { demand: 'parcels' }), source: path.basename(stopsFile) };
  const solved = await solveStops(stops, { zones: 12, seed: 1, threads: 1, balance: 0.1 });
  const { geojson } = boundariesGeoJson(solved);
  // Made under a temporary name first: a half-made demo is never opened.
  const temp = path.join(dir, `.${DEMO_PROJECT_NAME}.${process.pid}.tmp`);
  await createProject(temp);
  const h = await openProject(temp);
  try {
    h.store.addStopSet(stops);
    await h.savePlan(solved, DEMO_PLAN_NAME, { request: { zones: 12, seed: 1, balance: 0.1 }, boundaries: geojson });
  } finally {
    await h.close();
  }
  // Linked into place, not renamed: of two first starts at once, the second keeps the first's.
  try {
    linkSync(temp, file);
  } catch (e) {
    if ((e as NodeJS.ErrnoException).code !== 'EEXIST') throw e;
  } finally {
    rmSync(temp, { force: true });
  }
  return file;
}
