import { readFileSync } from 'node:fs';
import type { ServerResponse } from 'node:http';
import { assetType, resolveAsset } from '../util/asset-files.js';
import { sendText } from './headers.js';

export { resolveAsset };

export function serveAsset(res: ServerResponse, root: string, urlPath: string, head: boolean): void {
  const r = resolveAsset(root, urlPath);
  if (!('file' in r)) {
    sendText(res, r.status, r.status === 404 ? 'not found' : r.status === 400 ? 'bad request' : 'forbidden');
    return;
  }
  const body = readFileSync(r.file);
  res.writeHead(200, { 'Content-Type': assetType(r.file), 'Content-Length': body.length, 'Cache-Control': 'no-cache' });
  res.end(head ? undefined : body);
}
