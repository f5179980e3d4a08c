import type { ApiMethod } from '../api/wire.js';

/** The IPC channel of an Api method (ipcMain.handle / ipcRenderer.invoke). */
export function channelOf(method: ApiMethod): string {
  return `zoneplan:${method}`;
}

/** The name the preload exposes the Api under: window.zoneplan. */
export const API_GLOBAL = 'zoneplan';
