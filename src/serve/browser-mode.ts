import path from 'node:path';
import { appRoot, userDataDir } from '../api/app-paths.js';
import { ensureDemoProject } from '../api/demo.js';
import { MAP_SETTINGS_FILE } from '../api/map-settings.js';
import { AppSession } from '../api/session.js';
import { startServer, type RunningServer } from './server.js';

export interface BrowserModeOptions {
  readonly port?: number;
  /** The project to open; default the demo project in the user's data folder (made on first use). */
  readonly project?: string;
  readonly dataDir?: string;
  readonly staticDir?: string;
}

/** Starts browser mode: a session on the project and the local server for it. */
export async function startBrowserMode(options: BrowserModeOptions = {}): Promise<{ server: RunningServer; session: AppSession; stop: () => Promise<void> }> {
  const dataDir = options.dataDir ?? userDataDir();
  const file = options.project ?? (await ensureDemoProject(dataDir));
  const session = new AppSession({ mode: 'browser', mapSettingsFile: path.join(dataDir, MAP_SETTINGS_FILE) });
  await session.open(file);
  try {
    const server = await startServer({ session, staticDir: options.staticDir ?? path.join(appRoot(), 'dist', 'renderer'), port: options.port ?? 0 });
    return {
      server,
      session,
      stop: async () => {
        await server.close();
        await session.close();
      },
    };
  } catch (e) {
    await session.close();
    throw e;
  }
}
