import { randomBytes } from 'node:crypto';
import { createServer, type IncomingMessage, type ServerResponse } from 'node:http';
import type { AddressInfo } from 'node:net';
import type { Api } from '../api/app-types.js';
import { MAX_BODY_BYTES } from '../api/wire.js';
import { handleApi } from './api-route.js';
import { checkOrigin, checkToken } from './guard.js';
import { sendJson, sendText, setSecurityHeaders } from './headers.js';
import { serveAsset } from './static-files.js';

export interface ServeOptions {
  readonly session: Api;
  /** The built map window (dist/renderer). */
  readonly staticDir: string;
  /** 0: any free port. */
  readonly port?: number;
  /** A given token (tests); default a random one per run. */
  readonly token?: string;
  readonly maxBodyBytes?: number;
  /** Where internal faults are logged (never sent to the page). */
  readonly log?: (e: unknown) => void;
}

export interface RunningServer {
  /** Always the loopback address 127.0.0.1. */
  readonly address: string;
  readonly port: number;
  readonly token: string;
  /** The URL to open, token included. */
  readonly url: string;
  close(): Promise<void>;
}

/** A random token for one server run (32 bytes, URL-safe). */
export function newToken(): string {
  return randomBytes(32).toString('base64url');
}

/**
 * Browser mode: the map window and its Api over HTTP on 127.0.0.1 only. Every request must be
 * addressed to the server's own host and origin; /api calls must carry the run's token.
 */
export async function startServer(options: ServeOptions): Promise<RunningServer> {
  const token = options.token ?? newToken();
  const log = options.log ?? ((e: unknown) => console.error('zoneplan serve: internal error:', e));
  let port = 0;
  const handle = async (req: IncomingMessage, res: ServerResponse): Promise<void> => {
    setSecurityHeaders(res);
    const refused = checkOrigin(req, port);
    if (refused) return sendText(res, refused.status, refused.message);
    const rawPath = (req.url ?? '/').split('?')[0]!;
    if (rawPath.startsWith('/api/')) {
      const noToken = checkToken(req, token);
      if (noToken) return sendJson(res, noToken.status, { ok: false, error: { kind: 'usage', message: noToken.message } });
      return handleApi(req, res, rawPath.slice('/api/'.length), options.session, log, options.maxBodyBytes ?? MAX_BODY_BYTES);
    }
    if (req.method !== 'GET' && req.method !== 'HEAD') {
      res.setHeader('Allow', 'GET, HEAD');
      return sendText(res, 405, 'method not allowed');
    }
    serveAsset(res, options.staticDir, rawPath, req.method === 'HEAD');
  };
  const server = createServer((req, res) => {
    handle(req, res).catch((e: unknown) => {
      log(e);
      if (!res.headersSent) sendJson(res, 500, { ok: false, error: { kind: 'internal', message: 'internal error in Zoneplan' } });
      else res.destroy();
    });
  });
  server.headersTimeout = 30_000;
  server.requestTimeout = 10 * 60_000;
  await new Promise<void>((resolve, reject) => {
    server.once('error', reject);
    server.listen({ host: '127.0.0.1', port: options.port ?? 0 }, () => resolve());
  });
  const bound = server.address() as AddressInfo;
  port = bound.port;
  return {
    address: bound.address,
    port,
    token,
    url: `http://127.0.0.1:${port}/?token=${token}`,
    close: () =>
      new Promise<void>((resolve) => {
        server.closeAllConnections();
        server.close(() => resolve());
      }),
  };
}
