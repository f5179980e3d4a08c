/**
 * The map window's own URL scheme: the window loads zoneplan-app://app/index.html, and the files
 * of dist/renderer are answered by a protocol handler in the main process instead of being read
 * over file:// (Electron's security checklist, item 18). The scheme is registered as privileged
 * (standard: relative URLs and web storage work; secure: a secure context; supportFetchAPI), and
 * the handler answers only files inside the renderer folder, with their MIME type and the CSP.
 */
import { readFile } from 'node:fs/promises';
import { APP_CSP } from '../api/content-policy.js';
import { assetType, resolveAsset } from '../util/asset-files.js';
import type { ProtocolLike, SchemePrivilegesLike } from './electron-like.js';

export const APP_SCHEME = 'zoneplan-app';
/** The origin of the map window: the only one whose top frame may call the Api (ipc.ts). */
export const APP_ORIGIN = `${APP_SCHEME}://app`;
export const APP_INDEX_URL = `${APP_ORIGIN}/index.html`;

export const APP_SCHEME_PRIVILEGES: SchemePrivilegesLike = { standard: true, secure: true, supportFetchAPI: true };

/** Must run before the app is ready (Electron reads privileged schemes once, at start). */
export function registerAppScheme(protocol: Pick<ProtocolLike, 'registerSchemesAsPrivileged'>): void {
  protocol.registerSchemesAsPrivileged([{ scheme: APP_SCHEME, privileges: APP_SCHEME_PRIVILEGES }]);
}

/**
 * The file under `root` that an app URL names, or why not: 403 for anything that tries to leave
 * the folder (.., encoded dots, slashes, backslashes or NUL, absolute or drive paths, a link out
 * of it), 404 for another host, a dot file or a file that is not there.
 */
export function resolveAppFile(root: string, url: string): { file: string } | { status: 400 | 403 | 404 } {
  if (!url.startsWith(`${APP_ORIGIN}/`)) return { status: 404 };
  return resolveAsset(root, url.slice(APP_ORIGIN.length).split(/[?#]/)[0]!);
}

/** Headers on every answer of the app scheme. */
function headers(type: string): Record<string, string> {
  return { 'Content-Type': type, 'Content-Security-Policy': APP_CSP, 'X-Content-Type-Options': 'nosniff', 'Cache-Control': 'no-cache' };
}

const REASONS: Record<number, string> = { 400: 'bad request', 403: 'forbidden', 404: 'not found', 405: 'method not allowed' };

function refusal(status: 400 | 403 | 404 | 405): Response {
  return new Response(REASONS[status], { status, headers: headers('text/plain; charset=utf-8') });
}

/** The answer to one request of the map window for a file of the renderer folder `root`. */
export async function appResponse(root: string, request: { readonly url: string; readonly method: string }): Promise<Response> {
  if (request.method !== 'GET' && request.method !== 'HEAD') return refusal(405);
  const r = resolveAppFile(root, request.url);
  if (!('file' in r)) return refusal(r.status);
  const body = await readFile(r.file);
  return new Response(request.method === 'HEAD' ? null : body, { status: 200, headers: headers(assetType(r.file)) });
}

/** Serves the renderer folder on the app scheme (after the app is ready). */
export function serveAppFiles(protocol: Pick<ProtocolLike, 'handle'>, rendererDir: string): void {
  protocol.handle(APP_SCHEME, (request) => appResponse(rendererDir, request));
}
