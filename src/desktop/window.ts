import { APP_CSP } from '../api/content-policy.js';
import type { BrowserWindowLike, ElectronLike, SessionLike, WebContentsLike, WebPreferencesLike } from './electron-like.js';

/** The map window's webPreferences: isolated, sandboxed, no Node, web security on. */
export function secureWebPreferences(preload: string): WebPreferencesLike {
  return {
    preload,
    contextIsolation: true,
    sandbox: true,
    nodeIntegration: false,
    nodeIntegrationInWorker: false,
    nodeIntegrationInSubFrames: false,
    webSecurity: true,
    allowRunningInsecureContent: false,
    experimentalFeatures: false,
    webviewTag: false,
    navigateOnDragDrop: false,
    safeDialogs: true,
    spellcheck: false,
  };
}

/** No navigation away from the app, no new windows, no <webview>. */
export function hardenWebContents(contents: WebContentsLike): void {
  contents.on('will-navigate', (e) => e.preventDefault());
  contents.on('will-redirect', (e) => e.preventDefault());
  contents.on('will-attach-webview', (e) => e.preventDefault());
  contents.setWindowOpenHandler(() => ({ action: 'deny' }));
}

/** Every permission request (camera, location, notifications, ...) is denied; the CSP is set on every answer. */
export function hardenSession(session: SessionLike): void {
  session.setPermissionRequestHandler((_contents, _permission, callback) => callback(false));
  session.setPermissionCheckHandler(() => false);
  session.setDevicePermissionHandler?.(() => false);
  session.webRequest.onHeadersReceived((details, callback) => {
    callback({ responseHeaders: { ...(details.responseHeaders ?? {}), 'Content-Security-Policy': [APP_CSP] } });
  });
}

/** The map window, loaded from the app's own scheme (app-protocol.ts), never from file://. */
export function createMainWindow(electron: Pick<ElectronLike, 'BrowserWindow'>, files: { preload: string; url: string }): BrowserWindowLike {
  const win = new electron.BrowserWindow({ width: 1280, height: 800, show: false, title: 'Zoneplan', webPreferences: secureWebPreferences(files.preload) });
  hardenWebContents(win.webContents);
  hardenSession(win.webContents.session);
  win.once('ready-to-show', () => win.show());
  void win.loadURL(files.url);
  return win;
}
