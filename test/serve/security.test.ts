import { existsSync, mkdirSync, symlinkSync, writeFileSync } from 'node:fs';
import { request } from 'node:http';
import { networkInterfaces } from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { solveStops } from '../../src/api/plan-file.js';
import { savePlanToProject } from '../../src/api/project.js';
import type { AppSession } from '../../src/api/session.js';
import { readStopsText } from '../../src/api/text-import.js';
import { META_HEADER, TOKEN_HEADER } from '../../src/api/wire.js';
import { startServer, type RunningServer } from '../../src/serve/server.js';
import { emptySession, stopsCsv, tempDir } from '../app/helpers.js';

const SECRET = 'top secret: this file is outside the app folder';

let session: AppSession;
let server: RunningServer;
let small: RunningServer;
let root: string;

interface Answer {
  status: number;
  headers: Record<string, string | string[] | undefined>;
  body: Buffer;
}

/** One raw HTTP request (exact path and headers as given, Host included). */
function send(
  port: number,
  o: { method?: string; path: string; headers?: Record<string, string>; body?: string | Buffer; chunks?: Buffer[]; host?: string },
  target = '127.0.0.1',
): Promise<Answer> {
  return new Promise((resolve, reject) => {
    const req = request({ host: target, port, method: o.method ?? 'GET', path: o.path, headers: { host: o.host ?? `127.0.0.1:${port}`, ...(o.headers ?? {}) } }, (res) => {
      const chunks: Buffer[] = [];
      res.on('data', (c: Buffer) => chunks.push(c));
      res.on('end', () => resolve({ status: res.statusCode!, headers: res.headers, body: Buffer.concat(chunks) }));
    });
    req.on('error', reject);
    if (o.chunks) {
      for (const c of o.chunks) req.write(c);
      req.end();
    } else req.end(o.body);
  });
}

function call(port: number, method: string, args: unknown[], headers: Record<string, string> = {}): Promise<Answer> {
  return send(port, { method: 'POST', path: `/api/call/${method}`, headers: { 'content-type': 'application/json', [TOKEN_HEADER]: server.token, ...headers }, body: JSON.stringify({ args }) });
}

const json = (a: Answer): { ok: boolean; value?: unknown; error?: { kind: string; message: string } } => JSON.parse(a.body.toString('utf8'));

beforeAll(async () => {
  let file: string;
  ({ session, file } = await emptySession());
  await session.importStops({ name: 'stops.csv', text: stopsCsv(120) });
  await savePlanToProject(file, await solveStops(readStopsText('stops.csv', stopsCsv(120)), { zones: 3, seed: 1, threads: 1 }), 'p1');
  // The app folder, and a secret beside it that must never be served.
  const base = tempDir('static');
  root = path.join(base, 'renderer');
  mkdirSync(path.join(root, 'assets'), { recursive: true });
  writeFileSync(path.join(root, 'index.html'), '<!doctype html><title>Zoneplan</title>');
  writeFileSync(path.join(root, 'main.js'), 'console.log(1)');
  writeFileSync(path.join(root, 'assets', 'a.svg'), '<svg/>');
  writeFileSync(path.join(root, '.env'), SECRET);
  writeFileSync(path.join(base, 'secret.txt'), SECRET);
  symlinkSync(path.join(base, 'secret.txt'), path.join(root, 'link.txt'));
  server = await startServer({ session, staticDir: root, port: 0, log: () => {} });
  small = await startServer({ session, staticDir: root, port: 0, token: server.token, maxBodyBytes: 1000, log: () => {} });
});

afterAll(async () => {
  await server?.close();
  await small?.close();
  await session?.close();
});

describe('browser-mode server: where it listens', () => {
  it('binds the loopback address only and prints a URL with the token', () => {
    expect(server.address).toBe('127.0.0.1');
    expect(server.url).toBe(`http://127.0.0.1:${server.port}/?token=${server.token}`);
    expect(server.token).toMatch(/^[A-Za-z0-9_-]{43}$/);
  });

  it('cannot be reached on another interface of the machine', async () => {
    const other = Object.values(networkInterfaces())
      .flat()
      .find((i) => i && i.family === 'IPv4' && !i.internal);
    if (!other) return; // a machine with loopback only: nothing else to try
    await expect(send(server.port, { path: '/', host: `${other.address}:${server.port}` }, other.address)).rejects.toThrow(/ECONNREFUSED/);
  });

  it('makes a new random token for every run', async () => {
    const again = await startServer({ session, staticDir: root, port: 0 });
    try {
      expect(again.token).not.toBe(server.token);
    } finally {
      await again.close();
    }
  });
});

describe('browser-mode server: who may call', () => {
  it('refuses an API call without the token (401)', async () => {
    const a = await send(server.port, { method: 'POST', path: '/api/call/project', body: '{"args":[]}' });
    expect(a.status).toBe(401);
    expect(json(a).ok).toBe(false);
  });

  it('refuses a wrong token, of the same length or not (401)', async () => {
    const wrong = server.token.slice(0, -1) + (server.token.endsWith('A') ? 'B' : 'A');
    expect((await call(server.port, 'project', [], { [TOKEN_HEADER]: wrong })).status).toBe(401);
    expect((await call(server.port, 'project', [], { [TOKEN_HEADER]: 'short' })).status).toBe(401);
    // The token in the query string is for the page, not a substitute for the header.
    const q = await send(server.port, { method: 'POST', path: `/api/call/project?token=${server.token}`, body: '{"args":[]}' });
    expect(q.status).toBe(401);
  });

  it('refuses a foreign Host header, also for the page itself (403, DNS rebinding)', async () => {
    for (const host of ['evil.example', `evil.example:${server.port}`, `127.0.0.1:${server.port + 1}`, `localhost.evil.example:${server.port}`, `0.0.0.0:${server.port}`]) {
      expect((await send(server.port, { path: '/', host })).status).toBe(403);
      expect((await send(server.port, { method: 'POST', path: '/api/call/project', host, headers: { [TOKEN_HEADER]: server.token }, body: '{"args":[]}' })).status).toBe(403);
    }
    expect((await send(server.port, { path: '/', host: `localhost:${server.port}` })).status).toBe(200);
  });

  it('refuses a foreign Origin, even with the right token (403, cross-site requests)', async () => {
    for (const origin of ['http://evil.example', `http://127.0.0.1:${server.port + 1}`, 'null', `https://127.0.0.1:${server.port}`]) {
      const a = await call(server.port, 'project', [], { origin });
      expect(a.status).toBe(403);
    }
    expect((await call(server.port, 'project', [], { 'sec-fetch-site': 'cross-site' })).status).toBe(403);
    expect((await call(server.port, 'project', [], { origin: `http://127.0.0.1:${server.port}` })).status).toBe(200);
    expect((await call(server.port, 'project', [], { origin: `http://localhost:${server.port}`, 'sec-fetch-site': 'same-origin' })).status).toBe(200);
  });

  it('answers no CORS preflight and sends no CORS headers', async () => {
    const pre = await send(server.port, { method: 'OPTIONS', path: '/api/call/project', headers: { origin: `http://127.0.0.1:${server.port}`, 'access-control-request-method': 'POST' } });
    expect(pre.status).toBeGreaterThanOrEqual(400);
    expect(pre.headers['access-control-allow-origin']).toBeUndefined();
    const ok = await call(server.port, 'project', []);
    expect(ok.headers['access-control-allow-origin']).toBeUndefined();
  });

  it('refuses a body over the limit (413), declared or streamed', async () => {
    const big = JSON.stringify({ args: [{ name: 'a.csv', text: 'x'.repeat(2000) }] });
    const declared = await send(small.port, { method: 'POST', path: '/api/call/importStops', headers: { [TOKEN_HEADER]: server.token, 'content-length': String(Buffer.byteLength(big)) }, body: big });
    expect(declared.status).toBe(413);
    const streamed = await send(small.port, { method: 'POST', path: '/api/call/importStops', headers: { [TOKEN_HEADER]: server.token, 'transfer-encoding': 'chunked' }, chunks: [Buffer.from(big.slice(0, 600)), Buffer.from(big.slice(600))] });
    expect(streamed.status).toBe(413);
    expect((await session.project()).stopSets).toHaveLength(1);
  });
});

describe('browser-mode server: static files', () => {
  it('serves the app for / (with the token in the query) and its assets', async () => {
    const page = await send(server.port, { path: `/?token=${server.token}` });
    expect(page.status).toBe(200);
    expect(page.headers['content-type']).toMatch(/text\/html/);
    expect(page.body.toString()).toContain('<title>Zoneplan</title>');
    const js = await send(server.port, { path: '/main.js' });
    expect(js.status).toBe(200);
    expect(js.headers['content-type']).toMatch(/javascript/);
    expect((await send(server.port, { path: '/assets/a.svg' })).status).toBe(200);
  });

  it('never serves a file outside its folder (path traversal)', async () => {
    const tries = [
      '/../secret.txt',
      '/assets/../../secret.txt',
      '/%2e%2e/secret.txt',
      '/%2E%2E%2Fsecret.txt',
      '/..%2fsecret.txt',
      '/..%5csecret.txt',
      '/assets/..\\..\\secret.txt',
      '/%252e%252e/secret.txt',
      '/index.html%00.png',
      '//etc/passwd',
      '/C:/Windows/win.ini',
      '/.env',
      '/link.txt',
      '/%c0%ae%c0%ae/secret.txt',
    ];
    for (const p of tries) {
      const a = await send(server.port, { path: p });
      expect([400, 403, 404], p).toContain(a.status);
      expect(a.body.toString()).not.toContain(SECRET);
    }
    expect((await send(server.port, { path: '/../secret.txt' })).status).toBe(403);
    expect((await send(server.port, { path: '/link.txt' })).status).toBe(403);
    expect((await send(server.port, { path: '/missing.js' })).status).toBe(404);
  });

  it('sets the security headers on every answer', async () => {
    for (const a of [await send(server.port, { path: '/' }), await call(server.port, 'mode', []), await send(server.port, { path: '/nope' })]) {
      expect(a.headers['content-security-policy']).toMatch(/default-src 'none'/);
      expect(a.headers['content-security-policy']).toMatch(/script-src 'self'(;|$)/);
      expect(a.headers['x-content-type-options']).toBe('nosniff');
      expect(a.headers['referrer-policy']).toBe('no-referrer');
      expect(a.headers['x-frame-options']).toBe('DENY');
    }
  });

  it('refuses other methods on files', async () => {
    expect((await send(server.port, { method: 'POST', path: '/index.html', body: 'x' })).status).toBe(405);
  });
});

describe('browser-mode server: the API', () => {
  it('answers a real call', async () => {
    const mode = await call(server.port, 'mode', []);
    expect(json(mode)).toEqual({ ok: true, value: 'browser' });
    const p = json(await call(server.port, 'project', []));
    expect(p.ok).toBe(true);
    expect((p.value as { plans: { name: string }[] }).plans.map((x) => x.name)).toEqual(['p1']);
    const v = json(await call(server.port, 'plan', ['p1']));
    expect((v.value as { zones: unknown[] }).zones).toHaveLength(3);
  });

  it('imports CSV text over HTTP, and reports bad rows as data', async () => {
    const bad = json(await call(server.port, 'importStops', [{ name: 'bad.csv', text: 'id,lat,lon\nA,99,10\n' }]));
    expect(bad.ok).toBe(true);
    expect(bad.value).toMatchObject({ ok: false, errorCount: 1, problems: [{ row: 2, field: 'lat' }] });
  });

  it('sends planArrays as binary with its layout in a header', async () => {
    const a = await send(server.port, { method: 'POST', path: '/api/binary/planArrays', headers: { [TOKEN_HEADER]: server.token }, body: JSON.stringify({ args: ['p1'] }) });
    expect(a.status).toBe(200);
    expect(a.headers['content-type']).toBe('application/octet-stream');
    const meta = JSON.parse(String(a.headers[META_HEADER])) as { count: number; zoneOffset: number; lonLatOffset: number };
    const direct = await session.planArrays('p1');
    expect(meta).toEqual({ count: 120, lonLatOffset: direct.lonLatOffset, zoneOffset: direct.zoneOffset, demandOffset: direct.demandOffset, lockedOffset: direct.lockedOffset });
    expect(a.body.length).toBe(direct.buffer.byteLength);
    expect(Buffer.compare(a.body, Buffer.from(direct.buffer))).toBe(0);
  });

  it('refuses arguments that do not fit, before the session sees them (400)', async () => {
    for (const [method, args] of [
      ['plan', [42]],
      ['plan', []],
      ['plan', ['p1', 'extra']],
      ['edit', ['p1', { kind: 'move', stop: -1, zone: 1 }]],
      ['edit', ['p1', { kind: 'teleport', stop: 1 }]],
      ['startRun', [1, { zones: 0 }, 'x']],
      ['startRun', [1, { zones: 3, threads: 64 }, 'x']],
      ['startSweep', [1, 6, 2, {}]],
      ['startSweep', [1, 2, 6, { zones: 4 }]],
      ['startSweep', [1, 2, 6, { threads: 8 }]],
      ['startSweep', [1, 2]],
      ['sweepStatus', ['a/b']],
      ['sweepStatus', []],
      ['cancelSweep', [42]],
      ['startRebalance', ['p1', 1, 'x', { stops: 1.5 }]],
      ['startRebalance', ['p1', 1]],
      ['rebalanceStatus', ['a/b']],
      ['cancelRebalance', []],
      ['exportPlan', [{ plan: 'p1', kind: 'plan', file: 'a\u0000b' }]],
    ] as [string, unknown[]][]) {
      const a = await call(server.port, method, args);
      expect(a.status, `${method} ${JSON.stringify(args)}`).toBe(400);
      expect(json(a).error!.kind).toBe('usage');
    }
    expect((await session.project()).plans).toHaveLength(1);
  });

  it('takes no file paths of the machine: projects, stops, depots and export destinations (400)', async () => {
    const dir = tempDir('paths');
    const target = path.join(dir, 'out.geojson');
    for (const [method, args] of [
      ['openProject', ['/etc/passwd']],
      ['newProject', [path.join(dir, 'new.zoneplan')]],
      ['importStops', [{ file: '/etc/hosts' }]],
      ['startRun', [1, { zones: 3, depotsFile: '/etc/hosts' }, 'x']],
      ['sweep', [1, 2, 3, { depotsFile: '/etc/hosts' }]],
      ['startSweep', [1, 2, 3, { depotsFile: '/etc/hosts' }]],
      ['exportPlan', [{ plan: 'p1', kind: 'plan', file: target }]],
    ] as [string, unknown[]][]) {
      const a = await call(server.port, method, args);
      expect(a.status, method).toBe(400);
      expect(json(a).error!.message, method).toMatch(/the window takes no file paths/);
    }
    expect(existsSync(target)).toBe(false);
    expect(existsSync(path.join(dir, 'new.zoneplan'))).toBe(false);
    // The same export as content is answered.
    const content = json(await call(server.port, 'exportPlan', [{ plan: 'p1', kind: 'plan', file: null }]));
    expect(content.ok).toBe(true);
    expect((await session.project()).plans).toHaveLength(1);
  });

  it('refuses unknown methods and malformed bodies', async () => {
    for (const m of ['nope', '__proto__', 'constructor', 'toString', 'open', 'close']) expect((await call(server.port, m, [])).status, m).toBe(404);
    const notJson = await send(server.port, { method: 'POST', path: '/api/call/mode', headers: { [TOKEN_HEADER]: server.token }, body: '{args' });
    expect(notJson.status).toBe(400);
    const noArgs = await send(server.port, { method: 'POST', path: '/api/call/mode', headers: { [TOKEN_HEADER]: server.token }, body: '{"x":1}' });
    expect(noArgs.status).toBe(400);
    expect((await send(server.port, { method: 'GET', path: '/api/call/mode', headers: { [TOKEN_HEADER]: server.token } })).status).toBe(405);
  });

  it('reports errors as WireError messages, never stack traces', async () => {
    const a = await call(server.port, 'plan', ['no such plan']);
    const r = json(a);
    expect(r.ok).toBe(false);
    expect(r.error!.kind).toBe('project');
    expect(r.error!.message).toMatch(/no such plan/);
    expect(a.body.toString()).not.toMatch(/\n\s+at /);
  });
});

describe('browser-mode server: a sweep started, followed and cancelled over HTTP', () => {
  type Status = { id: string; state: string; fraction: number; from: number; to: number; rows: { zones: number; ms?: number }[]; message: string | null };
  const value = <T>(a: Answer): T => {
    const r = json(a);
    expect(r.ok, JSON.stringify(r.error)).toBe(true);
    return r.value as T;
  };

  it('starts a sweep, gives its rows through sweepStatus until done, the same rows as sweep', async () => {
    const started = value<Status>(await call(server.port, 'startSweep', [1, 2, 4, { seed: 1, restarts: 1 }]));
    expect(started).toMatchObject({ state: 'running', from: 2, to: 4, fraction: 0, rows: [] });
    let s = started;
    for (let i = 0; i < 600 && s.state === 'running'; i++) {
      await new Promise((r) => setTimeout(r, 20));
      const next = value<Status>(await call(server.port, 'sweepStatus', [started.id]));
      // Rows only ever grow, in order of the number of zones.
      expect(next.rows.slice(0, s.rows.length)).toEqual(s.rows);
      expect(next.fraction).toBeGreaterThanOrEqual(s.fraction);
      s = next;
    }
    expect(s.state).toBe('done');
    expect(s.fraction).toBe(1);
    expect(s.rows.map((r) => r.zones)).toEqual([2, 3, 4]);
    // The same figures as the sweep that answers once done (its timings aside).
    const untimed = (rows: readonly { ms?: unknown }[]) => rows.map(({ ms: _ms, ...r }) => r);
    expect(untimed(s.rows)).toEqual(untimed(value<Status['rows']>(await call(server.port, 'sweep', [1, 2, 4, { seed: 1, restarts: 1 }]))));
  });

  it('cancels a sweep under way: cancelled, with the rows done before kept', async () => {
    const started = value<Status>(await call(server.port, 'startSweep', [1, 2, 100, { seed: 1, restarts: 50 }]));
    const cancelled = value<Status>(await call(server.port, 'cancelSweep', [started.id]));
    expect(cancelled.state).toBe('cancelled');
    expect(cancelled.rows.length).toBeLessThan(99);
    expect(cancelled.message).toMatch(new RegExp(`cancelled after ${cancelled.rows.length} of 99 zone counts`));
    const later = value<Status>(await call(server.port, 'sweepStatus', [started.id]));
    expect(later).toEqual(cancelled);
    // Cancelling again changes nothing.
    expect(value<Status>(await call(server.port, 'cancelSweep', [started.id]))).toEqual(cancelled);
  });

  it('answers an unknown sweep id with a usage error', async () => {
    for (const m of ['sweepStatus', 'cancelSweep']) {
      const r = json(await call(server.port, m, ['0f8fad5b-d9cb-469f-a165-70867728950e']));
      expect(r.ok, m).toBe(false);
      expect(r.error!.kind, m).toBe('usage');
      expect(r.error!.message, m).toMatch(/no sweep/);
    }
  });
});

describe('browser-mode server: a rebalance started, followed and cancelled over HTTP', () => {
  type Status = { id: string; state: string; fraction: number; phase: string; parent: string; planName: string; message: string | null; report: { moved: number; added: number; removedStops: number } | null };
  const value = <T>(a: Answer): T => {
    const r = json(a);
    expect(r.ok, JSON.stringify(r.error)).toBe(true);
    return r.value as T;
  };

  it('starts a rebalance, follows it through rebalanceStatus until the new plan is saved', async () => {
    const started = value<Status>(await call(server.port, 'startRebalance', ['p1', 1, 'p1 again', null]));
    expect(started).toMatchObject({ state: 'running', fraction: 0, parent: 'p1', planName: 'p1 again', report: null });
    let s = started;
    for (let i = 0; i < 600 && s.state === 'running'; i++) {
      await new Promise((r) => setTimeout(r, 20));
      const next = value<Status>(await call(server.port, 'rebalanceStatus', [started.id]));
      expect(next.fraction).toBeGreaterThanOrEqual(s.fraction);
      s = next;
    }
    expect(s).toMatchObject({ state: 'done', fraction: 1, phase: 'done', message: null });
    // The same stops again: nothing added, nothing gone, nothing moved.
    expect(s.report).toMatchObject({ moved: 0, added: 0, removedStops: 0 });
    expect((await session.project()).plans.find((p) => p.name === 'p1 again')?.parent).toBe('p1');
  });

  it('cancels a rebalance under way: cancelled, nothing saved', async () => {
    const started = value<Status>(await call(server.port, 'startRebalance', ['p1', 1, 'never saved', { stops: 0 }]));
    const cancelled = value<Status>(await call(server.port, 'cancelRebalance', [started.id]));
    expect(cancelled.state).toBe('cancelled');
    expect(cancelled.report).toBeNull();
    expect(value<Status>(await call(server.port, 'rebalanceStatus', [started.id]))).toEqual(cancelled);
    expect((await session.project()).plans.map((p) => p.name)).not.toContain('never saved');
  });

  it('answers an unknown rebalance id with a usage error', async () => {
    for (const m of ['rebalanceStatus', 'cancelRebalance']) {
      const r = json(await call(server.port, m, ['0f8fad5b-d9cb-469f-a165-70867728950e']));
      expect(r.ok, m).toBe(false);
      expect(r.error!.kind, m).toBe('usage');
      expect(r.error!.message, m).toMatch(/no rebalance/);
    }
  });
});

describe('browser-mode server: binary errors', () => {
  it('answers a planArrays call for a missing plan with an HTTP error and a WireReply', async () => {
    const a = await send(server.port, { method: 'POST', path: '/api/binary/planArrays', headers: { [TOKEN_HEADER]: server.token }, body: JSON.stringify({ args: ['missing'] }) });
    expect(a.status).toBe(422);
    expect(json(a)).toMatchObject({ ok: false, error: { kind: 'project' } });
  });
});
