import type {
  BrowserWindowLike,
  BrowserWindowOptionsLike,
  ElectronLike,
  IpcMainEventLike,
  MenuItemOptionsLike,
  PreventableEvent,
  ProtocolLike,
  SchemePrivilegesLike,
  SessionLike,
  WebContentsLike,
} from '../../src/desktop/electron-like.js';

/** A stand-in for the electron module: records what the shell asks of it. */
export class FakeWebContents implements WebContentsLike {
  readonly listeners = new Map<string, ((e: PreventableEvent, ...rest: unknown[]) => void)[]>();
  openHandler: ((d: { url: string }) => { action: 'deny' }) | null = null;
  reloads = 0;
  /** Messages sent to the page, as [channel, ...args]. */
  readonly sent: unknown[][] = [];
  readonly session = new FakeSession();
  on(event: string, listener: (e: PreventableEvent, ...rest: unknown[]) => void): this {
    this.listeners.set(event, [...(this.listeners.get(event) ?? []), listener]);
    return this;
  }
  setWindowOpenHandler(h: (d: { url: string }) => { action: 'deny' }): void {
    this.openHandler = h;
  }
  send(channel: string, ...args: unknown[]): void {
    this.sent.push([channel, ...args]);
  }
  /** Not part of WebContentsLike: counts reloads should anything ever ask for one. */
  reload(): void {
    this.reloads++;
  }
  /** Fires an event; true when a listener prevented it. */
  fire(event: string, ...rest: unknown[]): boolean {
    let prevented = false;
    for (const l of this.listeners.get(event) ?? []) l({ preventDefault: () => (prevented = true) }, ...rest);
    return prevented;
  }
}

export class FakeSession implements SessionLike {
  requestHandler: ((wc: unknown, permission: string, cb: (granted: boolean) => void) => void) | null = null;
  checkHandler: ((wc: unknown, permission: string) => boolean) | null = null;
  deviceHandler: ((d: unknown) => boolean) | null = null;
  headersListener: ((d: { responseHeaders?: Record<string, string[]> }, cb: (r: { responseHeaders?: Record<string, string[]> }) => void) => void) | null = null;
  setPermissionRequestHandler(h: FakeSession['requestHandler']): void {
    this.requestHandler = h;
  }
  setPermissionCheckHandler(h: FakeSession['checkHandler']): void {
    this.checkHandler = h;
  }
  setDevicePermissionHandler(h: (d: unknown) => boolean): void {
    this.deviceHandler = h;
  }
  readonly webRequest = {
    onHeadersReceived: (l: NonNullable<FakeSession['headersListener']>): void => {
      this.headersListener = l;
    },
  };
}

export class FakeWindow implements BrowserWindowLike {
  static created: FakeWindow[] = [];
  readonly webContents = new FakeWebContents();
  loaded: string | null = null;
  destroyed = false;
  constructor(readonly options: BrowserWindowOptionsLike) {
    FakeWindow.created.push(this);
  }
  async loadURL(url: string): Promise<void> {
    this.loaded = url;
  }
  isDestroyed(): boolean {
    return this.destroyed;
  }
  once(): this {
    return this;
  }
  show(): void {}
}

export type Handler = (event: IpcMainEventLike, ...args: unknown[]) => Promise<unknown>;

/**
 * Electron's protocol module as far as the shell uses it, with Electron's order rules: privileged
 * schemes only before the app is ready (and only once), handlers only after.
 */
export class FakeProtocol implements ProtocolLike {
  ready = false;
  readonly privileged: { scheme: string; privileges: SchemePrivilegesLike }[] = [];
  readonly handlers = new Map<string, (request: Request) => Response | Promise<Response>>();
  registerSchemesAsPrivileged(schemes: { scheme: string; privileges: SchemePrivilegesLike }[]): void {
    if (this.ready) throw new Error('registerSchemesAsPrivileged after the app is ready');
    if (this.privileged.length > 0) throw new Error('registerSchemesAsPrivileged called twice');
    this.privileged.push(...schemes);
  }
  handle(scheme: string, handler: (request: Request) => Response | Promise<Response>): void {
    if (!this.ready) throw new Error('protocol.handle before the app is ready');
    if (this.handlers.has(scheme)) throw new Error(`second handler for ${scheme}`);
    this.handlers.set(scheme, handler);
  }
}

/** What the dialogs answer next (one answer per call, then "canceled"), and the error boxes shown. */
export interface FakeDialogs {
  readonly open: { canceled: boolean; filePaths: string[] }[];
  readonly save: { canceled: boolean; filePath?: string }[];
  readonly errors: [string, string][];
}

export function fakeElectron(userData: string): ElectronLike & {
  handlers: Map<string, Handler>;
  appListeners: Map<string, ((...a: unknown[]) => void)[]>;
  menus: MenuItemOptionsLike[][];
  protocol: FakeProtocol;
  dialogs: FakeDialogs;
} {
  const handlers = new Map<string, Handler>();
  const appListeners = new Map<string, ((...a: unknown[]) => void)[]>();
  const menus: MenuItemOptionsLike[][] = [];
  const protocol = new FakeProtocol();
  const dialogs: FakeDialogs = { open: [], save: [], errors: [] };
  return {
    handlers,
    appListeners,
    menus,
    protocol,
    dialogs,
    app: {
      whenReady: async () => {
        protocol.ready = true;
      },
      on: (event: string, l: (...a: never[]) => void) => appListeners.set(event, [...(appListeners.get(event) ?? []), l as (...a: unknown[]) => void]),
      getPath: () => userData,
      quit: () => {},
    },
    BrowserWindow: FakeWindow,
    ipcMain: {
      handle: (channel, listener) => {
        if (handlers.has(channel)) throw new Error(`second handler for ${channel}`);
        handlers.set(channel, listener);
      },
      removeHandler: (channel) => handlers.delete(channel),
    },
    dialog: {
      showOpenDialog: async () => dialogs.open.shift() ?? { canceled: true, filePaths: [] },
      showSaveDialog: async () => dialogs.save.shift() ?? { canceled: true },
      showErrorBox: (title, content) => void dialogs.errors.push([title, content]),
    },
    Menu: {
      buildFromTemplate: (t) => {
        menus.push(t);
        return t;
      },
      setApplicationMenu: () => {},
    },
  };
}

/** ipcRenderer as far as the preload uses it: invoke answers from `answer`; emit() plays a message from the main side. */
export class FakeIpcRenderer {
  readonly invoked: [string, unknown[]][] = [];
  readonly listeners = new Map<string, ((event: unknown, ...args: unknown[]) => void)[]>();
  constructor(private readonly answer: (channel: string, args: unknown[]) => unknown = () => ({ ok: true, value: null })) {}
  async invoke(channel: string, ...args: unknown[]): Promise<unknown> {
    this.invoked.push([channel, args]);
    return this.answer(channel, args);
  }
  on(channel: string, listener: (event: unknown, ...args: unknown[]) => void): this {
    this.listeners.set(channel, [...(this.listeners.get(channel) ?? []), listener]);
    return this;
  }
  removeListener(channel: string, listener: (event: unknown, ...args: unknown[]) => void): this {
    this.listeners.set(channel, (this.listeners.get(channel) ?? []).filter((l) => l !== listener));
    return this;
  }
  /** Delivers a message as Electron does: an IpcRendererEvent first, then the arguments. */
  emit(channel: string, event: unknown, ...args: unknown[]): void {
    for (const l of this.listeners.get(channel) ?? []) l(event, ...args);
  }
}
