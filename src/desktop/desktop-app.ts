import path from 'node:path';
import type { ProjectInfo } from '../api/app-types.js';
import { userDataDir } from '../api/app-paths.js';
import { ensureDemoProject } from '../api/demo.js';
import { MAP_SETTINGS_FILE } from '../api/map-settings.js';
import { AppSession } from '../api/session.js';
import { toWireError } from '../api/wire-error.js';
import { APP_INDEX_URL, APP_ORIGIN, registerAppScheme, serveAppFiles } from './app-protocol.js';
import { CHANGED_CHANNEL, type AppChange } from './channels.js';
import type { BrowserWindowLike, ElectronLike } from './electron-like.js';
import { registerIpc, trustedFrame } from './ipc.js';
import { menuTemplate, type MenuActions } from './menu.js';
import { RecentProjects } from './recent.js';
import { createMainWindow, hardenWebContents } from './window.js';

export interface DesktopOptions {
  /** The built app's dist/ folder (renderer/ and main/ inside). */
  readonly distDir: string;
  /** A project file to open (from the command line or a file association). */
  readonly project?: string;
  readonly log?: (e: unknown) => void;
}

const PROJECT_FILTER = [{ name: 'Zoneplan project', extensions: ['zoneplan'] }];
const STOPS_FILTER = [{ name: 'Stops (CSV or GeoJSON)', extensions: ['csv', 'tsv', 'txt', 'geojson', 'json'] }];

/**
 * The desktop app: one window on one project (the last one opened, or the demo project on the
 * first start), its Api over IPC, and the menu's project, import and export commands. The window
 * loads from the app's own scheme; after a menu command it is told what changed (CHANGED_CHANNEL)
 * and redraws that itself, so the page is never reloaded.
 */
export async function startDesktop(electron: ElectronLike, options: DesktopOptions): Promise<{ session: AppSession; window: BrowserWindowLike }> {
  const { app, dialog, Menu, protocol } = electron;
  const log = options.log ?? ((e: unknown) => console.error('zoneplan: internal error:', e));
  // Electron reads the privileged schemes once, before it is ready: this runs before the first await.
  registerAppScheme(protocol);
  app.on('web-contents-created', ((_event: unknown, contents: Parameters<typeof hardenWebContents>[0]) => hardenWebContents(contents)) as (...args: never[]) => void);
  await app.whenReady();
  serveAppFiles(protocol, path.join(options.distDir, 'renderer'));
  const dataDir = app.getPath('userData');
  const recent = new RecentProjects(path.join(dataDir, 'recent-projects.json'));
  // The map settings live where browser mode keeps them (userDataDir), not in Electron's own
  // folder (on Linux another one), so that both front ends share them.
  const session = new AppSession({ mode: 'desktop', mapSettingsFile: path.join(userDataDir(), MAP_SETTINGS_FILE) });
  const first = options.project ?? recent.latest() ?? (await ensureDemoProject(dataDir));
  await session.open(first);
  recent.add(first);

  registerIpc(electron.ipcMain, session, trustedFrame(APP_ORIGIN), log);
  const window = createMainWindow(electron, { preload: path.join(options.distDir, 'main', 'preload.cjs'), url: APP_INDEX_URL });

  const fail = (title: string, e: unknown): void => {
    const w = toWireError(e);
    if (w.kind === 'internal') log(e);
    dialog.showErrorBox(title, w.message);
  };
  const changed = (change: AppChange): void => {
    if (!window.isDestroyed()) window.webContents.send(CHANGED_CHANNEL, change);
  };
  const opened = (info: ProjectInfo): void => {
    setMenu(recent.add(info.file));
    changed({ what: 'project', file: info.file });
  };
  const actions: MenuActions = {
    newProject: () => {
      void (async () => {
        const r = await dialog.showSaveDialog({ title: 'New project', defaultPath: 'project.zoneplan', filters: PROJECT_FILTER });
        if (r.canceled || !r.filePath) return;
        opened(await session.newProject(r.filePath));
      })().catch((e: unknown) => fail('The project could not be made', e));
    },
    openProject: (file) => {
      void (async () => {
        let chosen = file;
        if (!chosen) {
          const r = await dialog.showOpenDialog({ title: 'Open project', properties: ['openFile'], filters: PROJECT_FILTER });
          if (r.canceled || !r.filePaths[0]) return;
          chosen = r.filePaths[0];
        }
        opened(await session.openProject(chosen));
      })().catch((e: unknown) => fail('The project could not be opened', e));
    },
    importStops: () => {
      void (async () => {
        const r = await dialog.showOpenDialog({ title: 'Import stops', properties: ['openFile'], filters: STOPS_FILTER });
        if (r.canceled || !r.filePaths[0]) return;
        const outcome = await session.importStops({ file: r.filePaths[0] });
        if (!outcome.ok) {
          const lines = outcome.problems.slice(0, 20).map((p) => `${p.row !== undefined ? `row ${p.row}` : p.feature !== undefined ? `feature ${p.feature}` : 'file'}${p.field ? `, ${p.field}` : ''}: ${p.message}`);
          dialog.showErrorBox(`Nothing was imported: ${outcome.errorCount} problem${outcome.errorCount === 1 ? '' : 's'} in ${path.basename(outcome.file)}`, lines.join('\n'));
          return;
        }
        changed({ what: 'stops', stopSet: outcome.stopSet.id });
      })().catch((e: unknown) => fail('The stops could not be imported', e));
    },
    exportPlan: () => {
      void (async () => {
        const plan = session.lastPlan ?? (await session.project()).plans.at(-1)?.name;
        if (!plan) {
          dialog.showErrorBox('Nothing to export', 'The project has no plan yet: run one first.');
          return;
        }
        const r = await dialog.showSaveDialog({
          title: `Export plan "${plan}"`,
          defaultPath: `${plan.replace(/[^\w.-]+/g, '-')}.geojson`,
          filters: [{ name: 'Plan GeoJSON', extensions: ['geojson'] }, { name: 'Assignments CSV', extensions: ['csv'] }],
        });
        if (r.canceled || !r.filePath) return;
        const kind = path.extname(r.filePath).toLowerCase() === '.csv' ? 'assignments' : 'plan';
        await session.exportPlan({ plan, kind, file: r.filePath });
      })().catch((e: unknown) => fail('The plan could not be exported', e));
    },
    quit: () => app.quit(),
  };
  const setMenu = (list: readonly string[]): void => Menu.setApplicationMenu(Menu.buildFromTemplate(menuTemplate(actions, list)));
  setMenu(recent.list());

  let closing = false;
  app.on('window-all-closed', () => {
    if (closing) return;
    closing = true;
    void session.close().finally(() => app.quit());
  });
  return { session, window };
}
