import { existsSync, readFileSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { fileURLToPath } from 'node:url';

/**
 * Where the app's own files are: the package folder (with dist/renderer and demo-data), found
 * from this module whether it runs from source, from dist/ or from a packaged app.
 */
export function appRoot(from: string = import.meta.url): string {
  let dir = path.dirname(fileURLToPath(from));
  for (;;) {
    const pkg = path.join(dir, 'package.json');
    if (existsSync(pkg)) {
      try {
        if ((JSON.parse(readFileSync(pkg, 'utf8')) as { name?: unknown }).name === 'zoneplan') return dir;
      } catch {
        /* not ours: keep looking upwards */
      }
    }
    const up = path.dirname(dir);
    if (up === dir) throw new Error('the Zoneplan package folder was not found above the running code');
    dir = up;
  }
}

/** The user's data folder for Zoneplan (the demo project, recent projects). */
export function userDataDir(env: NodeJS.ProcessEnv = process.env): string {
  if (env.ZONEPLAN_DATA_DIR) return env.ZONEPLAN_DATA_DIR;
  if (process.platform === 'win32' && env.APPDATA) return path.join(env.APPDATA, 'Zoneplan');
  if (process.platform === 'darwin') return path.join(os.homedir(), 'Library', 'Application Support', 'Zoneplan');
  return path.join(env.XDG_DATA_HOME ?? path.join(os.homedir(), '.local', 'share'), 'zoneplan');
}
