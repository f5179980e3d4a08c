/**
 * The map window's own URL scheme: the window loads zoneplan-app://app/index.html, and the files
 * of dist/renderer are answered by a protocol handler in the main process instead of being read
 * over file:// (Electron's security checklist, item 18). The scheme is registered as privileged
 * (standard: relative URLs and web storage work; secure: a secure context; supportFetchAPI), and
 * the handler answers only files inside the renderer folder, with their MIME type and the CSP.
 */
import { realpathSync, statSync } from 'node:fs';
import { readFile } from 'node:fs/promises';
import path from 'node:path';
import { APP_CSP } from '../api/content-policy.js';
import type { ProtocolLike, SchemePrivilegesLike } from './electron-like.js';

export const APP_SCHEME = 'zoneplan-app';
/** The origin of the map window: the only one whose top frame may call the Api (ipc.ts). */
export const APP_ORIGIN = `${APP_SCHEME}://app`;
export const APP_INDEX_URL = `${APP_ORIGIN}/index.html`;

export const APP_SCHEME_PRIVILEGES: SchemePrivilegesLike = { standard: true, secure: true, supportFetchAPI: true };

const TYPES: Record<string, string> = {
  '.html': 'text/html; charset=utf-8',
  '.js': 'text/javascript; charset=utf-8',
  '.mjs': 'text/javascript; charset=utf-8',
  '.css': 'text/css; charset=utf-8',
  '.json': 'application/json; charset=utf-8',
  '.map': 'application/json; charset=utf-8',
  '.png': 'image/png',
  '.svg': 'image/svg+xml',
  '.ico': 'image/x-icon',
  '.woff2': 'font/woff2',
  '.txt': 'text/plain; charset=utf-8',
};

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
  const raw = url.slice(APP_ORIGIN.length).split(/[?#]/)[0]!;
  if (/%2f|%5c|%00|%2e/i.test(raw) || raw.includes('\\') || raw.includes('\0')) return { status: 403 };
  let decoded: string;
  try {
    decoded = decodeURIComponent(raw);
  } catch {
    return { status: 400 };
  }
  if (decoded.includes('\0') || decoded.includes('\\')) return { status: 403 };
  const parts = decoded.split('/').filter((p) => p.length > 0);
  if (parts.some((p) => p === '..' || p === '.' || /^[a-z]:/i.test(p))) return { status: 403 };
  if (parts.length === 0) parts.push('index.html');
  if (parts.some((p) => p.startsWith('.'))) return { status: 404 };
  let base: string;
  try {
    base = realpathSync(root);
  } catch {
    return { status: 404 };
  }
  const file = path.resolve(base, ...parts);
  if (!file.startsWith(base + path.sep)) return { status: 403 };
  let real: string;
  try {
    real = realpathSync(file);
  } catch {
    return { status: 404 };
  }
  // A link inside the folder that points out of it is refused too.
  if (!real.startsWith(base + path.sep)) return { status: 403 };
  if (!statSync(real).isFile()) return { status: 404 };
  return { file: real };
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
  return new Response(request.method === 'HEAD' ? null : body, { status: 200, headers: headers(TYPES[path.extname(r.file).toLowerCase()] ?? 'application/octet-stream') });
}

/** Serves the renderer folder on the app scheme (after the app is ready). */
export function serveAppFiles(protocol: Pick<ProtocolLike, 'handle'>, rendererDir: string): void {
  protocol.handle(APP_SCHEME, (request) => appResponse(rendererDir, request));
}
