/**
 * The renderer's files as the browser-mode server and the desktop app scheme answer them: which
 * file under the renderer folder a URL path names (or why not), and its MIME type.
 */
import { existsSync, realpathSync, statSync } from 'node:fs';
import path from 'node:path';

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

/**
 * The file under `root` that a URL path names, or why not: 403 for anything that tries to leave
 * the folder (.., encoded slashes or dots, backslashes, NUL, absolute or drive paths), 404 for a
 * file that is not there.
 */
export function resolveAsset(root: string, urlPath: string): { file: string } | { status: 400 | 403 | 404 } {
  if (/%2f|%5c|%00|%2e/i.test(urlPath) || urlPath.includes('\\') || urlPath.includes('\0')) return { status: 403 };
  let decoded: string;
  try {
    decoded = decodeURIComponent(urlPath);
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
  if (!existsSync(file)) return { status: 404 };
  // A link inside the folder that points out of it is refused too.
  const real = realpathSync(file);
  if (!real.startsWith(base + path.sep)) return { status: 403 };
  if (!statSync(real).isFile()) return { status: 404 };
  return { file: real };
}

/** MIME type of a renderer file, by its extension. */
export function assetType(file: string): string {
  return TYPES[path.extname(file).toLowerCase()] ?? 'application/octet-stream';
}
