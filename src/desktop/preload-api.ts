/**
 * What the preload gives the map window: one function per Api method, each an IPC call to the
 * main process, exposed through contextBridge as window.zoneplan; and window.zoneplanEvents, the
 * window's subscription to what the menu changed. No Node or file access is exposed; the main
 * side checks every argument again.
 */
import type { Api } from '../api/app-types.js';
import { API_METHODS, type WireError, type WireReply } from '../api/wire.js';
import { API_GLOBAL, CHANGED_CHANNEL, EVENTS_GLOBAL, channelOf, type AppChange, type AppEvents } from './channels.js';
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

/** A fresh AppChange with only its own fields, or null for anything else. */
export function cleanChange(change: unknown): AppChange | null {
  if (!change || typeof change !== 'object') return null;
  const c = change as Record<string, unknown>;
  if (c['what'] === 'project' && typeof c['file'] === 'string') return { what: 'project', file: c['file'] };
  if (c['what'] === 'stops' && Number.isSafeInteger(c['stopSet'])) return { what: 'stops', stopSet: c['stopSet'] as number };
  return null;
}

/**
 * The window's events. The page's listener gets the change only: the IpcRendererEvent (which
 * carries the sender and its ports) never reaches the page.
 */
export function preloadEvents(ipc: IpcRendererLike): AppEvents {
  return Object.freeze({
    onChanged(listener: (change: AppChange) => void): () => void {
      if (typeof listener !== 'function') throw new TypeError('onChanged takes a function');
      const relay = (_event: unknown, change: unknown): void => {
        const c = cleanChange(change);
        if (c) listener(c);
      };
      ipc.on(CHANGED_CHANNEL, relay);
      return () => void ipc.removeListener(CHANGED_CHANNEL, relay);
    },
  });
}

export function exposeApi(bridge: ContextBridgeLike, ipc: IpcRendererLike): void {
  bridge.exposeInMainWorld(API_GLOBAL, preloadApi(ipc) as unknown as Record<string, unknown>);
  bridge.exposeInMainWorld(EVENTS_GLOBAL, preloadEvents(ipc) as unknown as Record<string, unknown>);
}
