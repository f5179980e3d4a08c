import { timingSafeEqual } from 'node:crypto';
import type { IncomingMessage } from 'node:http';
import { TOKEN_HEADER } from '../api/wire.js';

/**
 * Who may talk to the local server: only pages of its own origin (Host header and, when sent,
 * Origin must be http://127.0.0.1:PORT or http://localhost:PORT; this refuses DNS rebinding and
 * requests from other local pages), and for /api calls only with the run's token.
 */
export interface Refusal {
  readonly status: 401 | 403;
  readonly message: string;
}

export function ownHosts(port: number): string[] {
  return [`127.0.0.1:${port}`, `localhost:${port}`];
}

export function checkOrigin(req: IncomingMessage, port: number): Refusal | null {
  const hosts = ownHosts(port);
  const host = req.headers.host;
  if (typeof host !== 'string' || !hosts.includes(host.toLowerCase())) return { status: 403, message: 'this server answers only requests addressed to its own loopback address' };
  const origin = req.headers.origin;
  if (origin !== undefined && !hosts.some((h) => origin.toLowerCase() === `http://${h}`)) return { status: 403, message: 'requests from other sites are refused' };
  const site = req.headers['sec-fetch-site'];
  if (site === 'cross-site' || site === 'same-site') return { status: 403, message: 'requests from other sites are refused' };
  return null;
}

export function checkToken(req: IncomingMessage, token: string): Refusal | null {
  const given = req.headers[TOKEN_HEADER];
  if (typeof given !== 'string' || given.length === 0) return { status: 401, message: `the request carries no token (header ${TOKEN_HEADER}); open the URL the server printed` };
  const a = Buffer.from(given);
  const b = Buffer.from(token);
  if (a.length !== b.length || !timingSafeEqual(a, b)) return { status: 401, message: 'the token is not this server run\'s; open the URL the server printed' };
  return null;
}
