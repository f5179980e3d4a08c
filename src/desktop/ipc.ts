import type { Api } from '../api/app-types.js';
import { refuseFilePaths, validateArgs } from '../api/validate.js';
import { toWireError } from '../api/wire-error.js';
import { API_METHODS, type WireReply } from '../api/wire.js';
import { channelOf } from './channels.js';
import type { FrameLike, IpcMainLike } from './electron-like.js';

/**
 * Only the app's own page, as the top frame, may call the Api: a frame of exactly the app's origin
 * (app-protocol.ts APP_ORIGIN), not a frame inside it, not another page or scheme.
 */
export function trustedFrame(origin: string): (frame: FrameLike | null) => boolean {
  const prefix = `${origin}/`;
  return (frame) => frame !== null && frame.parent === null && typeof frame.url === 'string' && frame.url.startsWith(prefix);
}

/**
 * One ipcMain handler per Api method: the sender is checked, the arguments validated (the same
 * schemas as the local server), then the session is called. Every answer is a WireReply, so that
 * errors reach the window as messages, never as stack traces. Returns a function that removes them.
 */
export function registerIpc(ipcMain: IpcMainLike, session: Api, trusted: (frame: FrameLike | null) => boolean, log: (e: unknown) => void): () => void {
  for (const method of API_METHODS) {
    ipcMain.handle(channelOf(method), async (event, ...args): Promise<WireReply> => {
      if (!trusted(event.senderFrame)) return { ok: false, error: { kind: 'usage', message: 'refused: the call does not come from the Zoneplan window' } };
      try {
        const checked = validateArgs(method, args);
        // The window names no file of this machine: the main side's dialogs and menus do (a
        // page that went wrong could otherwise read or overwrite any file the user can).
        refuseFilePaths(method, checked);
        const fn = session[method] as (...a: unknown[]) => Promise<unknown>;
        return { ok: true, value: await fn.apply(session, [...checked]) };
      } catch (e) {
        const error = toWireError(e);
        if (error.kind === 'internal') log(e);
        return { ok: false, error };
      }
    });
  }
  return () => {
    for (const method of API_METHODS) ipcMain.removeHandler(channelOf(method));
  };
}
