import type {
  BrowserWindowLike,
  BrowserWindowOptionsLike,
  ElectronLike,
  IpcMainEventLike,
  MenuItemOptionsLike,
  PreventableEvent,
  SessionLike,
  WebContentsLike,
} from '../../src/desktop/electron-like.js';

/** A stand-in for the electron module: records what the shell asks of it. */
export class FakeWebContents implements WebContentsLike {
  readonly listeners = new Map<string, ((e: PreventableEvent, ...rest: unknown[]) => void)[]>();
  openHandler: ((d: { url: string }) => { action: 'deny' }) | null = null;
  reloads = 0;
  readonly session = new FakeSession();
  on(event: string, listener: (e: PreventableEvent, ...rest: unknown[]) => void): this {
    this.listeners.set(event, [...(this.listeners.get(event) ?? []), listener]);
    return this;
  }
  setWindowOpenHandler(h: (d: { url: string }) => { action: 'deny' }): void {
    this.openHandler = h;
  }
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
  constructor(readonly options: BrowserWindowOptionsLike) {
    FakeWindow.created.push(this);
  }
  async loadFile(file: string): Promise<void> {
    this.loaded = file;
  }
  once(): this {
    return this;
  }
  show(): void {}
}

export type Handler = (event: IpcMainEventLike, ...args: unknown[]) => Promise<unknown>;

export function fakeElectron(userData: string): ElectronLike & { handlers: Map<string, Handler>; appListeners: Map<string, ((...a: unknown[]) => void)[]>; menus: MenuItemOptionsLike[][] } {
  const handlers = new Map<string, Handler>();
  const appListeners = new Map<string, ((...a: unknown[]) => void)[]>();
  const menus: MenuItemOptionsLike[][] = [];
  return {
    handlers,
    appListeners,
    menus,
    app: {
      whenReady: async () => undefined,
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
      showOpenDialog: async () => ({ canceled: true, filePaths: [] }),
      showSaveDialog: async () => ({ canceled: true }),
      showErrorBox: () => {},
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
