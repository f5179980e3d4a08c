import type { ApiMethod } from '../api/wire.js';

/** The IPC channel of an Api method (ipcMain.handle / ipcRenderer.invoke). */
export function channelOf(method: ApiMethod): string {
  return `zoneplan:${method}`;
}

/** The name the preload exposes the Api under: window.zoneplan. */
export const API_GLOBAL = 'zoneplan';

/** The channel on which the main side tells the window that a menu command changed what it shows. */
export const CHANGED_CHANNEL = 'zoneplan:changed';

/** The name the preload exposes the window's events under: window.zoneplanEvents (desktop app only). */
export const EVENTS_GLOBAL = 'zoneplanEvents';

/**
 * What changed on the main side: another project is open (File > New Project, Open Project, Open
 * Recent), or a stop set was imported into the open one (File > Import Stops).
 */
export type AppChange = { readonly what: 'project'; readonly file: string } | { readonly what: 'stops'; readonly stopSet: number };

/** window.zoneplanEvents: the window's subscription to AppChange; returns a function that ends it. */
export interface AppEvents {
  onChanged(listener: (change: AppChange) => void): () => void;
}
