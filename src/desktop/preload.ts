// The preload of the map window (bundled to dist/main/preload.cjs; sandboxed: it may only
// require electron).
import { contextBridge, ipcRenderer } from 'electron';
import { exposeApi } from './preload-api.js';

exposeApi(contextBridge, ipcRenderer);
