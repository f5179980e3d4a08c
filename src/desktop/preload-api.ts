/**
 * What the preload gives the map window: one function per Api method, each an IPC call to the
 * main process, exposed through contextBridge as window.zoneplan. No Node or file access is
 * exposed; the main side checks every argument again.
 */
import type { Api } from '../api/app-types.js';
import { API_METHODS, type WireError, type WireReply } from '../api/wire.js';
import { API_GLOBAL, channelOf } from './channels.js';
import type { ContextBridgeLike, IpcRendererLike } from './electron-like.js';

/** A WireError as the text of a thrown Error (only the message crosses contextBridge). */
function errorText(e: WireError): string {
  const problems = e.problems?.slice(0, 20).map((p) => `${p.row !== undefined ? `row ${p.row}: ` : p.feature !== undefined ? `feature ${p.feature}: ` : ''}${p.message}`) ?? [];
  return [e.message, ...problems].join('\n');
}

export function preloadApi(ipc: IpcRendererLike): Api {
  const api: Record<string, (...args: unknown[]) => Promise<unknown>> = {};
  for (const method of API_METHODS) {
    api[method] = async (...args: unknown[]) => {
      const reply = (await ipc.invoke(channelOf(method), ...args)) as WireReply;
      if (reply.ok) return reply.value;
      throw new Error(errorText(reply.error));
    };
  }
  return Object.freeze(api) as unknown as Api;
}

export function exposeApi(bridge: ContextBridgeLike, ipc: IpcRendererLike): void {
  bridge.exposeInMainWorld(API_GLOBAL, preloadApi(ipc) as unknown as Record<string, unknown>);
}
