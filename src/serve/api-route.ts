import type { IncomingMessage, ServerResponse } from 'node:http';
import type { Api, PlanArrays } from '../api/app-types.js';
import { ArgsError, refuseFilePaths, validateArgs } from '../api/validate.js';
import { toWireError } from '../api/wire-error.js';
import { MAX_BODY_BYTES, META_HEADER, type WireError, type WireReply } from '../api/wire.js';
import { sendJson } from './headers.js';

/** A request body over the limit: answered 413. */
class BodyTooLarge extends Error {}

/** The request body as text, refused (413) past `limit` bytes. */
export function readBody(req: IncomingMessage, limit: number): Promise<string> {
  return new Promise((resolve, reject) => {
    const declared = Number(req.headers['content-length']);
    if (Number.isFinite(declared) && declared > limit) {
      reject(new BodyTooLarge());
      return;
    }
    const chunks: Buffer[] = [];
    let size = 0;
    req.on('data', (c: Buffer) => {
      size += c.length;
      if (size > limit) {
        reject(new BodyTooLarge());
        req.removeAllListeners('data');
        req.resume();
        return;
      }
      chunks.push(c);
    });
    req.on('end', () => resolve(Buffer.concat(chunks).toString('utf8')));
    req.on('error', reject);
  });
}

function fail(res: ServerResponse, status: number, error: WireError): void {
  const reply: WireReply = { ok: false, error };
  sendJson(res, status, reply);
}

/** The arguments of a call: {"args": [...]} in the body. */
function argsOf(body: string): unknown {
  let parsed: unknown;
  try {
    parsed = JSON.parse(body);
  } catch {
    throw new ArgsError('request', ['the body is not JSON']);
  }
  if (!parsed || typeof parsed !== 'object' || Array.isArray(parsed) || !Array.isArray((parsed as { args?: unknown }).args)) {
    throw new ArgsError('request', ['the body must be {"args": [...]}']);
  }
  return (parsed as { args: unknown[] }).args;
}

/**
 * Answers POST /api/call/<method> and POST /api/binary/planArrays (the caller has checked the
 * origin and the token): arguments validated, then the session called; errors as WireError.
 */
export async function handleApi(req: IncomingMessage, res: ServerResponse, route: string, session: Api, log: (e: unknown) => void, limit = MAX_BODY_BYTES): Promise<void> {
  const binary = route === 'binary/planArrays';
  const method = binary ? 'planArrays' : route.startsWith('call/') ? route.slice('call/'.length) : null;
  if (method === null) return fail(res, 404, { kind: 'usage', message: 'no such route' });
  if (req.method !== 'POST') {
    res.setHeader('Allow', 'POST');
    return fail(res, 405, { kind: 'usage', message: 'API calls are POST requests' });
  }
  let body: string;
  try {
    body = await readBody(req, limit);
  } catch (e) {
    if (e instanceof BodyTooLarge) {
      res.setHeader('Connection', 'close');
      return fail(res, 413, { kind: 'usage', message: `the request is larger than ${limit} bytes` });
    }
    throw e;
  }
  try {
    const args = validateArgs(method, argsOf(body));
    refuseFilePaths(method, args);
    const fn = session[method as keyof Api] as (...a: readonly unknown[]) => Promise<unknown>;
    const value = await fn.apply(session, [...args]);
    if (binary) {
      const { buffer, ...meta } = value as PlanArrays;
      res.writeHead(200, { 'Content-Type': 'application/octet-stream', 'Content-Length': buffer.byteLength, [META_HEADER]: JSON.stringify(meta), 'Cache-Control': 'no-store' });
      res.end(Buffer.from(buffer));
      return;
    }
    const reply: WireReply = { ok: true, value };
    sendJson(res, 200, reply);
  } catch (e) {
    const error = toWireError(e);
    if (error.kind === 'internal') log(e);
    // Refused arguments are HTTP errors; other errors of a JSON call are answers (200) the page
    // shows. The binary route has no JSON answer to carry them, so its errors are HTTP errors too.
    const status = e instanceof ArgsError ? (e.issues[0] === 'no such method' ? 404 : 400) : !binary ? 200 : error.kind === 'internal' ? 500 : 422;
    fail(res, status, error);
  }
}
