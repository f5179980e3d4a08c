import path from 'node:path';
import { pathToFileURL } from 'node:url';
import * as esbuild from 'esbuild';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { Api } from '../../src/api/app-types.js';
import { APP_CSP } from '../../src/api/content-policy.js';
import { API_METHODS, type ApiMethod, type WireReply } from '../../src/api/wire.js';
import { APP_INDEX_URL, APP_ORIGIN } from '../../src/desktop/app-protocol.js';
import { channelOf } from '../../src/desktop/channels.js';
import { startDesktop } from '../../src/desktop/desktop-app.js';
import { registerIpc, trustedFrame } from '../../src/desktop/ipc.js';
import { menuTemplate } from '../../src/desktop/menu.js';
import { exposeApi } from '../../src/desktop/preload-api.js';
import { RecentProjects } from '../../src/desktop/recent.js';
import { createMainWindow, secureWebPreferences } from '../../src/desktop/window.js';
import type { AppSession } from '../../src/api/session.js';
import { createProject } from '../../src/api/project.js';
import { tempDir } from '../app/helpers.js';
import { readFileSync } from 'node:fs';
import { userDataDir } from '../../src/api/app-paths.js';
import { MAP_SETTINGS_FILE } from '../../src/api/map-settings.js';
import { startBrowserMode } from '../../src/serve/browser-mode.js';
import { fakeElectron, FakeIpcRenderer, FakeWindow, type Handler } from './stand-in.js';

const APP_FRAME = { url: APP_INDEX_URL, parent: null };

/** Arguments each method accepts (a call that passes validation). */
const GOOD: { [M in ApiMethod]: unknown[] } = {
  mode: [],
  project: [],
  newProject: ['/tmp/new.zoneplan'],
  openProject: ['/tmp/old.zoneplan'],
  importStops: [{ name: 'a.csv', text: 'id,lat,lon\n' }],
  startRun: [1, { zones: 3, seed: 2, balance: 0.05 }, 'week 1'],
  runStatus: ['0f8fad5b-d9cb-469f-a165-70867728950e'],
  cancelRun: ['0f8fad5b-d9cb-469f-a165-70867728950e'],
  plan: ['week 1'],
  planArrays: ['week 1'],
  stopIds: ['week 1'],
  stop: ['week 1', 0],
  edit: ['week 1', { kind: 'move', stop: 3, zone: 2 }],
  undo: ['week 1'],
  redo: ['week 1'],
  renamePlan: ['week 1', 'week 1b'],
  compare: ['week 1', 'week 2'],
  changedStopFlags: ['week 1', 'week 2', 'week 2'],
  rebalance: ['week 1', 2, 'week 2', { stops: 40 }],
  startRebalance: ['week 1', 2, 'week 2', { demandShare: 0.05 }],
  rebalanceStatus: ['0f8fad5b-d9cb-469f-a165-70867728950e'],
  cancelRebalance: ['0f8fad5b-d9cb-469f-a165-70867728950e'],
  sweep: [1, 2, 8, { seed: 1 }],
  startSweep: [1, 2, 8, { seed: 1, restarts: 2 }],
  sweepStatus: ['0f8fad5b-d9cb-469f-a165-70867728950e'],
  cancelSweep: ['0f8fad5b-d9cb-469f-a165-70867728950e'],
  exportPlan: [{ plan: 'week 1', kind: 'plan', file: null }],
  mapSettings: [],
  saveMapSettings: [{ tiles: { url: 'https://tiles.example.org/{z}/{x}/{y}.png', attribution: '© example' } }],
};

/** Argument lists each method must refuse. */
function badArgs(m: ApiMethod): unknown[][] {
  const good = GOOD[m];
  if (good.length === 0) return [['extra'], [{}]];
  return [[], [...good, 'extra', 'more'], good.map(() => ({ bogus: 1 })), good.map(() => Number.NaN)];
}

/** Methods whose every call names a file of this machine: refused from the window. */
const NAMES_A_FILE: readonly ApiMethod[] = ['newProject', 'openProject'];

/** A session stand-in that records the calls that reach it. */
function spySession(): { api: Api; calls: [string, unknown[]][] } {
  const calls: [string, unknown[]][] = [];
  const api = Object.fromEntries(
    API_METHODS.map((m) => [
      m,
      async (...args: unknown[]) => {
        calls.push([m, args]);
        return { method: m };
      },
    ]),
  ) as unknown as Api;
  return { api, calls };
}

describe('preload: exposes the Api through contextBridge', () => {
  it('exposes exactly the Api methods on window.zoneplan, each an IPC call', async () => {
    const exposed: Record<string, Record<string, unknown>> = {};
    const ipc = new FakeIpcRenderer((channel) => ({ ok: true, value: `answer to ${channel}` }) satisfies WireReply);
    const invoked = ipc.invoked;
    exposeApi({ exposeInMainWorld: (key, api) => (exposed[key] = api) }, ipc);
    expect(Object.keys(exposed)).toEqual(['zoneplan', 'zoneplanEvents']);
    const api = exposed.zoneplan!;
    expect(Object.keys(api).sort()).toEqual([...API_METHODS].sort());
    for (const m of API_METHODS) {
      expect(typeof api[m]).toBe('function');
      await expect((api[m] as (...a: unknown[]) => Promise<unknown>)(...GOOD[m])).resolves.toBe(`answer to zoneplan:${m}`);
    }
    expect(invoked.map(([c]) => c)).toEqual(API_METHODS.map((m) => `zoneplan:${m}`));
    expect(invoked[API_METHODS.indexOf('edit')]![1]).toEqual(GOOD.edit);
  });

  it('turns an error reply into a thrown Error with the message and the problems', async () => {
    const exposed: Record<string, Record<string, unknown>> = {};
    exposeApi(
      { exposeInMainWorld: (key, api) => (exposed[key] = api) },
      new FakeIpcRenderer(() => ({ ok: false, error: { kind: 'input', message: 'bad.csv: 1 error', problems: [{ severity: 'error', code: 'lat-range', file: 'bad.csv', row: 3, message: 'latitude 95 is out of range' }] } })),
    );
    await expect((exposed.zoneplan!.plan as (n: string) => Promise<unknown>)('x')).rejects.toThrow(/bad.csv: 1 error\nrow 3: latitude 95/);
  });

  it('bundles to one CommonJS file whose only require is electron, and exposes the Api when run', async () => {
    const out = await esbuild.build({ entryPoints: ['src/desktop/preload.ts'], bundle: true, format: 'cjs', platform: 'node', target: 'node20', external: ['electron'], write: false, logLevel: 'silent' });
    const code = out.outputFiles[0]!.text;
    const requires = [...code.matchAll(/require\(["']([^"']+)["']\)/g)].map((m) => m[1]);
    expect(new Set(requires)).toEqual(new Set(['electron']));
    const exposed: Record<string, Record<string, unknown>> = {};
    const electron = { contextBridge: { exposeInMainWorld: (k: string, a: Record<string, unknown>) => (exposed[k] = a) }, ipcRenderer: new FakeIpcRenderer() };
    const required: string[] = [];
    const fakeRequire = (id: string): unknown => {
      required.push(id);
      if (id !== 'electron') throw new Error(`the preload may not require ${id}`);
      return electron;
    };
    const module = { exports: {} };
    new Function('require', 'module', 'exports', code)(fakeRequire, module, module.exports);
    expect(required).toEqual(['electron']);
    expect(Object.keys(exposed.zoneplan ?? {}).sort()).toEqual([...API_METHODS].sort());
    expect(Object.keys(exposed.zoneplanEvents ?? {})).toEqual(['onChanged']);
    const seen: unknown[][] = [];
    (exposed.zoneplanEvents!.onChanged as (l: (...a: unknown[]) => void) => () => void)((...a) => seen.push(a));
    electron.ipcRenderer.emit('zoneplan:changed', { sender: 'ipc event' }, { what: 'project', file: '/p/a.zoneplan' });
    expect(seen).toEqual([[{ what: 'project', file: '/p/a.zoneplan' }]]);
  });
});

describe('ipc: every method handled, every argument validated', () => {
  let handlers: Map<string, Handler>;
  let calls: [string, unknown[]][];
  let logged: unknown[];

  beforeAll(() => {
    const e = fakeElectron('/tmp');
    const spy = spySession();
    calls = spy.calls;
    logged = [];
    registerIpc(e.ipcMain, spy.api, trustedFrame(APP_ORIGIN), (x) => logged.push(x));
    handlers = e.handlers;
  });

  it('registers one handler per Api method and no other', () => {
    expect([...handlers.keys()].sort()).toEqual(API_METHODS.map(channelOf).sort());
  });

  it('passes valid arguments through to the session', async () => {
    for (const m of API_METHODS.filter((x) => !NAMES_A_FILE.includes(x))) {
      calls.length = 0;
      const reply = (await handlers.get(channelOf(m))!({ senderFrame: APP_FRAME }, ...GOOD[m])) as WireReply;
      expect(reply, m).toEqual({ ok: true, value: { method: m } });
      expect(calls).toEqual([[m, GOOD[m]]]);
    }
    // A centre is freed where it is, or freed and put back at a position.
    for (const edit of [{ kind: 'unpin-centre', zone: 2 }, { kind: 'unpin-centre', zone: 2, lon: 12.5, lat: 51.4 }]) {
      calls.length = 0;
      const reply = (await handlers.get(channelOf('edit'))!({ senderFrame: APP_FRAME }, 'week 1', edit)) as WireReply;
      expect(reply, JSON.stringify(edit)).toEqual({ ok: true, value: { method: 'edit' } });
      expect(calls).toEqual([['edit', ['week 1', edit]]]);
    }
  });

  it('refuses file paths of this machine from the window (the main side\'s menus and dialogs name files)', async () => {
    const cases: [ApiMethod, unknown[]][] = [
      ['newProject', ['/home/user/other.zoneplan']],
      ['openProject', ['/home/user/other.zoneplan']],
      ['importStops', [{ file: '/etc/passwd' }]],
      ['startRun', [1, { zones: 3, depotsFile: '/home/user/depots.csv' }, 'p']],
      ['startSweep', [1, 2, 4, { depotsFile: '/home/user/depots.csv' }]],
      ['exportPlan', [{ plan: 'p', kind: 'plan', file: '/home/user/.bashrc' }]],
    ];
    for (const [m, args] of cases) {
      calls.length = 0;
      const reply = (await handlers.get(channelOf(m))!({ senderFrame: APP_FRAME }, ...args)) as WireReply;
      expect(reply.ok, m).toBe(false);
      if (!reply.ok) expect(reply.error.message, m).toMatch(/the window takes no file paths of this machine/);
      expect(calls, m).toEqual([]);
    }
  });

  it('refuses bad arguments before they reach the session', async () => {
    for (const m of API_METHODS) {
      for (const args of badArgs(m)) {
        calls.length = 0;
        const reply = (await handlers.get(channelOf(m))!({ senderFrame: APP_FRAME }, ...args)) as WireReply;
        expect(reply.ok, `${m}(${JSON.stringify(args)})`).toBe(false);
        if (!reply.ok) expect(reply.error.kind).toBe('usage');
        expect(calls, m).toEqual([]);
      }
    }
    const specific: [ApiMethod, unknown[]][] = [
      ['edit', ['p', { kind: 'move', stop: 1.5, zone: 2 }]],
      ['edit', ['p', { kind: 'pin-centre', zone: 1, lon: 181, lat: 0 }]],
      ['edit', ['p', { kind: 'unpin-centre', zone: 1, lon: 12 }]],
      ['edit', ['p', { kind: 'unpin-centre', zone: 1, stop: 3 }]],
      ['edit', ['p', { kind: 'lock', stop: 1, zone: 3 }]],
      ['startRun', [1, { zones: 3, depotsFile: '' }, 'p']],
      ['startRun', [1, { zones: 'many' }, 'p']],
      ['startRun', [1, { zones: 3, balance: 2 }, 'p']],
      ['importStops', [{ file: 'a.csv', text: 'x' }]],
      ['importStops', [{ name: 'a.csv', text: 'x' }, { delimiter: '|' }]],
      ['rebalance', ['a', 1, 'b', { stops: 3, demandShare: 0.1 }]],
      ['sweep', [1, 8, 2, {}]],
      ['changedStopFlags', ['a', 'b']],
      ['changedStopFlags', ['a', 'b', '']],
      ['startRebalance', ['a', 1, 'b', { stops: -1 }]],
      ['startRebalance', ['a', 0, 'b', null]],
      ['startRebalance', ['a', 1, 'b']],
      ['rebalanceStatus', ['../../etc']],
      ['cancelRebalance', [7]],
      ['startSweep', [1, 8, 2, {}]],
      ['startSweep', [1, 1, 200, {}]],
      ['startSweep', [1, 2, 8, { zones: 3 }]],
      ['startSweep', [1, 2, 8, { seed: 1 }, 'onChange']],
      ['sweepStatus', ['../../etc']],
      ['cancelSweep', ['']],
      ['exportPlan', [{ plan: 'p', kind: 'pdf', file: null }]],
      ['saveMapSettings', [{ tiles: { url: 'http://tiles.example.org/{z}/{x}/{y}.png', attribution: '' } }]],
      ['saveMapSettings', [{ tiles: { url: 'https://tiles.example.org/tile.png', attribution: '' } }]],
      ['saveMapSettings', [{ tiles: null, theme: 'dark' }]],
      ['mapSettings', ['extra']],
      ['runStatus', ['../../etc']],
      ['plan', ['']],
    ];
    for (const [m, args] of specific) {
      calls.length = 0;
      const reply = (await handlers.get(channelOf(m))!({ senderFrame: APP_FRAME }, ...args)) as WireReply;
      expect(reply.ok, `${m}(${JSON.stringify(args)})`).toBe(false);
      expect(calls).toEqual([]);
    }
  });

  it('refuses calls from any page but the app, or from a frame inside it', async () => {
    const refused = [
      null,
      { url: 'https://evil.example/', parent: null },
      { url: APP_INDEX_URL, parent: APP_FRAME },
      { url: 'file:///tmp/other.html', parent: null },
      // The page as the window loaded it before the app scheme: no longer trusted.
      { url: pathToFileURL('/opt/zoneplan/dist/renderer/index.html').href, parent: null },
      { url: 'zoneplan-app://evil/index.html', parent: null },
      { url: 'zoneplan-app://app.evil.example/index.html', parent: null },
      { url: 'zoneplan-app://app:8080/index.html', parent: null },
      { url: 'zoneplan-app://app@evil.example/index.html', parent: null },
      { url: 'zoneplan-apps://app/index.html', parent: null },
      { url: 'https://app/index.html', parent: null },
      { url: 'zoneplan-app://app', parent: null },
    ];
    for (const senderFrame of refused) {
      calls.length = 0;
      const reply = (await handlers.get(channelOf('project'))!({ senderFrame })) as WireReply;
      expect(reply.ok).toBe(false);
      expect(calls).toEqual([]);
    }
    const withQuery = (await handlers.get(channelOf('mode'))!({ senderFrame: { url: `${APP_INDEX_URL}?x=1#map`, parent: null } })) as WireReply;
    expect(withQuery.ok).toBe(true);
    const root = (await handlers.get(channelOf('mode'))!({ senderFrame: { url: `${APP_ORIGIN}/`, parent: null } })) as WireReply;
    expect(root.ok).toBe(true);
  });

  it('turns a fault of the session into an internal error without its stack', async () => {
    const e = fakeElectron('/tmp');
    const logs: unknown[] = [];
    registerIpc(e.ipcMain, { ...spySession().api, project: async () => { throw new TypeError('x is undefined'); } } as Api, trustedFrame(APP_ORIGIN), (x) => logs.push(x));
    const reply = (await e.handlers.get(channelOf('project'))!({ senderFrame: APP_FRAME })) as WireReply;
    expect(reply.ok).toBe(false);
    if (!reply.ok) {
      expect(reply.error.kind).toBe('internal');
      expect(JSON.stringify(reply)).not.toMatch(/x is undefined|\bat /);
    }
    expect(logs).toHaveLength(1);
  });
});

describe('window: the secure settings of Electron\'s security checklist', () => {
  it('uses isolated, sandboxed webPreferences without Node', () => {
    FakeWindow.created.length = 0;
    const win = createMainWindow({ BrowserWindow: FakeWindow }, { preload: '/opt/zoneplan/dist/main/preload.cjs', url: APP_INDEX_URL }) as FakeWindow;
    const p = win.options.webPreferences;
    expect(p).toEqual(secureWebPreferences('/opt/zoneplan/dist/main/preload.cjs'));
    expect(p.contextIsolation).toBe(true);
    expect(p.sandbox).toBe(true);
    expect(p.nodeIntegration).toBe(false);
    expect(p.nodeIntegrationInWorker).toBe(false);
    expect(p.nodeIntegrationInSubFrames).toBe(false);
    expect(p.webSecurity).toBe(true);
    expect(p.allowRunningInsecureContent).toBe(false);
    expect(p.experimentalFeatures).toBe(false);
    expect(p.webviewTag).toBe(false);
    expect(p.preload.endsWith('.cjs')).toBe(true);
    expect(win.loaded).toBe('zoneplan-app://app/index.html');
  });

  it('blocks navigation, redirects, webviews and new windows', () => {
    const win = createMainWindow({ BrowserWindow: FakeWindow }, { preload: '/p.cjs', url: APP_INDEX_URL }) as FakeWindow;
    expect(win.webContents.fire('will-navigate', 'https://evil.example/')).toBe(true);
    expect(win.webContents.fire('will-redirect', 'https://evil.example/')).toBe(true);
    expect(win.webContents.fire('will-attach-webview', {}, {})).toBe(true);
    expect(win.webContents.openHandler!({ url: 'https://evil.example/' })).toEqual({ action: 'deny' });
  });

  it('denies every permission request and check, and sets the CSP on every answer', () => {
    const win = createMainWindow({ BrowserWindow: FakeWindow }, { preload: '/p.cjs', url: APP_INDEX_URL }) as FakeWindow;
    const s = win.webContents.session;
    for (const permission of ['media', 'geolocation', 'notifications', 'clipboard-read', 'openExternal', 'fullscreen']) {
      let granted: boolean | null = null;
      s.requestHandler!(win.webContents, permission, (g) => (granted = g));
      expect(granted, permission).toBe(false);
      expect(s.checkHandler!(win.webContents, permission)).toBe(false);
    }
    expect(s.deviceHandler!({})).toBe(false);
    let headers: Record<string, string[]> | undefined;
    s.headersListener!({ responseHeaders: { 'content-type': ['text/html'] } }, (r) => (headers = r.responseHeaders));
    expect(headers!['Content-Security-Policy']).toEqual([APP_CSP]);
    expect(APP_CSP).toMatch(/script-src 'self'(;|$)/);
    expect(APP_CSP).not.toMatch(/unsafe-eval/);
  });
});

describe('desktop app: wiring with a stand-in electron', () => {
  let session: AppSession;
  const e = fakeElectron(tempDir('userdata'));
  // The user's data folder of browser mode (userDataDir), set for this test.
  const dataDir = tempDir('zoneplan-data');
  const envBefore = process.env['ZONEPLAN_DATA_DIR'];

  beforeAll(async () => {
    process.env['ZONEPLAN_DATA_DIR'] = dataDir;
    const dir = tempDir('desktop');
    const project = path.join(dir, 'p.zoneplan');
    await createProject(project);
    FakeWindow.created.length = 0;
    ({ session } = await startDesktop(e, { distDir: '/opt/zoneplan/dist', project, log: () => {} }));
  });

  afterAll(async () => {
    await session.close();
    if (envBefore === undefined) delete process.env['ZONEPLAN_DATA_DIR'];
    else process.env['ZONEPLAN_DATA_DIR'] = envBefore;
  });

  it('keeps the map settings where browser mode keeps them (userDataDir), not in Electron\'s folder', async () => {
    const tiles = { url: 'https://tiles.example.org/{z}/{x}/{y}.png', attribution: '© example' };
    const reply = (await e.handlers.get(channelOf('saveMapSettings'))!({ senderFrame: APP_FRAME }, { tiles })) as WireReply;
    expect(reply).toEqual({ ok: true, value: { tiles } });
    expect(path.join(userDataDir(), MAP_SETTINGS_FILE)).toBe(path.join(dataDir, MAP_SETTINGS_FILE));
    expect(JSON.parse(readFileSync(path.join(dataDir, MAP_SETTINGS_FILE), 'utf8'))).toEqual({ tiles });
    // Browser mode, started on its default data folder, finds them.
    const project = path.join(tempDir('web'), 'w.zoneplan');
    await createProject(project);
    const web = await startBrowserMode({ project, staticDir: tempDir('static') });
    try {
      expect(await web.session.mapSettings()).toEqual({ tiles });
    } finally {
      await web.stop();
    }
  });

  it('opens the project, handles every method over IPC and guards every web contents', async () => {
    expect([...e.handlers.keys()].sort()).toEqual(API_METHODS.map(channelOf).sort());
    const reply = (await e.handlers.get(channelOf('mode'))!({ senderFrame: APP_FRAME })) as WireReply;
    expect(reply).toEqual({ ok: true, value: 'desktop' });
    const project = (await e.handlers.get(channelOf('project'))!({ senderFrame: APP_FRAME })) as WireReply<{ file: string }>;
    expect(project.ok && project.value.file.endsWith('p.zoneplan')).toBe(true);
    expect(FakeWindow.created).toHaveLength(1);
    expect(FakeWindow.created[0]!.options.webPreferences.preload).toBe('/opt/zoneplan/dist/main/preload.cjs');
    // Any other web contents (a future window, a devtools page) gets the same guards.
    const created = e.appListeners.get('web-contents-created')!;
    const other = new FakeWindow({ width: 1, height: 1, show: false, title: '', webPreferences: secureWebPreferences('/p.cjs') });
    created[0]!({}, other.webContents);
    expect(other.webContents.fire('will-navigate', 'https://evil.example/')).toBe(true);
    expect(other.webContents.openHandler!({ url: 'https://evil.example/' })).toEqual({ action: 'deny' });
  });

  it('builds the menu with project, import, export and quit commands, and recent projects', () => {
    const menu = e.menus.at(-1)!;
    const file = menu.find((m) => m.label === 'File')!.submenu!;
    const labels = file.map((i) => i.label).filter(Boolean);
    expect(labels).toEqual(['New Project…', 'Open Project…', 'Open Recent', 'Import Stops…', 'Export Plan…', 'Quit']);
    expect(file.filter((i) => i.label && i.label !== 'Open Recent').every((i) => typeof i.click === 'function')).toBe(true);
    const recent = file.find((i) => i.label === 'Open Recent')!.submenu!;
    expect(recent.map((r) => r.label!)[0]).toMatch(/^p\.zoneplan — /);
  });
});

describe('menu and recent projects', () => {
  it('calls the action of each menu item', () => {
    const done: string[] = [];
    const t = menuTemplate(
      { newProject: () => done.push('new'), openProject: (f) => done.push(`open ${f ?? ''}`), importStops: () => done.push('import'), exportPlan: () => done.push('export'), quit: () => done.push('quit') },
      ['/data/a.zoneplan'],
    );
    const items = t[0]!.submenu!;
    for (const i of items) i.click?.();
    items.find((i) => i.label === 'Open Recent')!.submenu![0]!.click!();
    expect(done).toEqual(['new', 'open ', 'import', 'export', 'quit', 'open /data/a.zoneplan']);
  });

  it('keeps the newest projects first, without repeats, at most 8', () => {
    const r = new RecentProjects(path.join(tempDir('recent'), 'sub', 'recent.json'));
    expect(r.list()).toEqual([]);
    for (let i = 0; i < 10; i++) r.add(`/p/${i}.zoneplan`);
    r.add('/p/5.zoneplan');
    const list = r.list();
    expect(list).toHaveLength(8);
    expect(list[0]).toBe(path.resolve('/p/5.zoneplan'));
    expect(list[1]).toBe(path.resolve('/p/9.zoneplan'));
    expect(new Set(list).size).toBe(8);
    expect(r.latest()).toBeNull(); // none of them exists
  });
});
