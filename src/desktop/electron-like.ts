/**
 * The parts of Electron the desktop shell uses, as small interfaces: the shell takes the electron
 * module as a parameter, so that it can be checked with a stand-in under plain Node.
 */

export interface WebPreferencesLike {
  readonly preload: string;
  readonly contextIsolation: boolean;
  readonly sandbox: boolean;
  readonly nodeIntegration: boolean;
  readonly nodeIntegrationInWorker: boolean;
  readonly nodeIntegrationInSubFrames: boolean;
  readonly webSecurity: boolean;
  readonly allowRunningInsecureContent: boolean;
  readonly experimentalFeatures: boolean;
  readonly webviewTag: boolean;
  readonly navigateOnDragDrop: boolean;
  readonly safeDialogs: boolean;
  readonly spellcheck: boolean;
}

export interface FrameLike {
  readonly url: string;
  readonly parent: FrameLike | null;
}

export interface IpcMainEventLike {
  readonly senderFrame: FrameLike | null;
}

export interface IpcMainLike {
  handle(channel: string, listener: (event: IpcMainEventLike, ...args: unknown[]) => Promise<unknown>): void;
  removeHandler(channel: string): void;
}

export interface IpcRendererLike {
  invoke(channel: string, ...args: unknown[]): Promise<unknown>;
  on(channel: string, listener: (event: unknown, ...args: unknown[]) => void): unknown;
  removeListener(channel: string, listener: (event: unknown, ...args: unknown[]) => void): unknown;
}

export interface ContextBridgeLike {
  exposeInMainWorld(key: string, api: Record<string, unknown>): void;
}

export interface PreventableEvent {
  preventDefault(): void;
}

export interface WebContentsLike {
  on(event: 'will-navigate' | 'will-redirect' | 'will-attach-webview', listener: (event: PreventableEvent, ...rest: unknown[]) => void): unknown;
  setWindowOpenHandler(handler: (details: { url: string }) => { action: 'deny' }): void;
  /** A message to the page's preload (ipcRenderer.on). */
  send(channel: string, ...args: unknown[]): void;
  readonly session: SessionLike;
}

export interface SessionLike {
  setPermissionRequestHandler(handler: ((webContents: unknown, permission: string, callback: (granted: boolean) => void) => void) | null): void;
  setPermissionCheckHandler(handler: ((webContents: unknown, permission: string) => boolean) | null): void;
  setDevicePermissionHandler?(handler: (details: unknown) => boolean): void;
  readonly webRequest: {
    onHeadersReceived(listener: (details: { responseHeaders?: Record<string, string[]> }, callback: (response: { responseHeaders?: Record<string, string[]> }) => void) => void): void;
  };
}

export interface BrowserWindowLike {
  readonly webContents: WebContentsLike;
  loadURL(url: string): Promise<void>;
  isDestroyed(): boolean;
  once(event: 'ready-to-show', listener: () => void): unknown;
  show(): void;
}

export interface BrowserWindowOptionsLike {
  readonly width: number;
  readonly height: number;
  readonly show: boolean;
  readonly title: string;
  readonly webPreferences: WebPreferencesLike;
}

export interface DialogLike {
  showOpenDialog(options: { title: string; properties: string[]; filters: { name: string; extensions: string[] }[] }): Promise<{ canceled: boolean; filePaths: string[] }>;
  showSaveDialog(options: { title: string; defaultPath?: string; filters: { name: string; extensions: string[] }[] }): Promise<{ canceled: boolean; filePath?: string }>;
  showErrorBox(title: string, content: string): void;
}

export interface MenuItemOptionsLike {
  readonly label?: string;
  readonly role?: string;
  readonly type?: 'separator' | 'normal' | 'submenu';
  readonly accelerator?: string;
  readonly enabled?: boolean;
  readonly click?: () => void;
  readonly submenu?: readonly MenuItemOptionsLike[];
}

export interface SchemePrivilegesLike {
  readonly standard?: boolean;
  readonly secure?: boolean;
  readonly supportFetchAPI?: boolean;
  readonly bypassCSP?: boolean;
  readonly corsEnabled?: boolean;
  readonly stream?: boolean;
  readonly codeCache?: boolean;
  readonly allowServiceWorkers?: boolean;
}

export interface ProtocolLike {
  registerSchemesAsPrivileged(schemes: { scheme: string; privileges: SchemePrivilegesLike }[]): void;
  handle(scheme: string, handler: (request: Request) => Response | Promise<Response>): void;
}

export interface ElectronLike {
  readonly app: {
    whenReady(): Promise<unknown>;
    on(event: string, listener: (...args: never[]) => void): unknown;
    getPath(name: 'userData'): string;
    quit(): void;
  };
  readonly BrowserWindow: new (options: BrowserWindowOptionsLike) => BrowserWindowLike;
  readonly ipcMain: IpcMainLike;
  readonly protocol: ProtocolLike;
  readonly dialog: DialogLike;
  readonly Menu: {
    buildFromTemplate(template: MenuItemOptionsLike[]): unknown;
    setApplicationMenu(menu: unknown): void;
  };
}
