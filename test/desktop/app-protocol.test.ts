import { mkdirSync, symlinkSync, writeFileSync } from 'node:fs';
import path from 'node:path';
import { pathToFileURL } from 'node:url';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { APP_CSP } from '../../src/api/content-policy.js';
import { createProject } from '../../src/api/project.js';
import type { AppSession } from '../../src/api/session.js';
import type { WireReply } from '../../src/api/wire.js';
import { APP_INDEX_URL, APP_ORIGIN, APP_SCHEME, appResponse, registerAppScheme, resolveAppFile } from '../../src/desktop/app-protocol.js';
import { channelOf } from '../../src/desktop/channels.js';
import { startDesktop } from '../../src/desktop/desktop-app.js';
import { tempDir } from '../app/helpers.js';
import { fakeElectron, FakeProtocol, FakeWindow } from './stand-in.js';

const SECRET = 'the secret next to the renderer folder';

/** A renderer folder like dist/renderer, with a secret file beside it and a link out of it. */
function rendererFolder(): { root: string; outside: string } {
  const dist = tempDir('app-protocol');
  const root = path.join(dist, 'renderer');
  mkdirSync(path.join(root, 'assets'), { recursive: true });
  writeFileSync(path.join(root, 'index.html'), '<!doctype html><title>Zoneplan</title>');
  writeFileSync(path.join(root, 'main.js'), '(()=>{})();');
  writeFileSync(path.join(root, 'main.js.map'), '{"version":3}');
  writeFileSync(path.join(root, 'main.css'), 'body{margin:0}');
  writeFileSync(path.join(root, 'assets', 'marker-icon-2V3QKKVC.png'), Buffer.from([0x89, 0x50, 0x4e, 0x47]));
  writeFileSync(path.join(root, 'assets', 'layers-BWBAp2CZ.svg'), '<svg xmlns="http://www.w3.org/2000/svg"/>');
  writeFileSync(path.join(root, 'notes.bin'), Buffer.from([1, 2, 3]));
  writeFileSync(path.join(root, '.env'), SECRET);
  const outside = path.join(dist, 'secret.txt');
  writeFileSync(outside, SECRET);
  mkdirSync(path.join(dist, 'renderer-private'));
  writeFileSync(path.join(dist, 'renderer-private', 'index.html'), SECRET);
  symlinkSync(outside, path.join(root, 'link-out.txt'));
  symlinkSync(path.join(root, 'main.css'), path.join(root, 'link-in.css'));
  return { root, outside };
}

const get = (root: string, url: string, method = 'GET'): Promise<Response> => appResponse(root, { url, method });

describe('app scheme: registered as privileged before the app is ready', () => {
  it('registers zoneplan-app as standard, secure and with fetch, and nothing more', () => {
    const p = new FakeProtocol();
    registerAppScheme(p);
    expect(p.privileged).toEqual([{ scheme: 'zoneplan-app', privileges: { standard: true, secure: true, supportFetchAPI: true } }]);
    expect(APP_SCHEME).toBe('zoneplan-app');
    expect(APP_ORIGIN).toBe('zoneplan-app://app');
    expect(APP_INDEX_URL).toBe('zoneplan-app://app/index.html');
    // Electron takes privileged schemes only before it is ready; the stand-in holds the same rule.
    const late = new FakeProtocol();
    late.ready = true;
    expect(() => registerAppScheme(late)).toThrow(/after the app is ready/);
  });
});

describe('app scheme: serves dist/renderer and nothing else', () => {
  let root: string;
  let outside: string;
  beforeAll(() => ({ root, outside } = rendererFolder()));

  it('answers the renderer files with their MIME types and the CSP', async () => {
    const cases: [string, string, string | null][] = [
      [APP_INDEX_URL, 'text/html; charset=utf-8', '<!doctype html><title>Zoneplan</title>'],
      [`${APP_ORIGIN}/`, 'text/html; charset=utf-8', '<!doctype html><title>Zoneplan</title>'],
      [`${APP_INDEX_URL}?token=x#map`, 'text/html; charset=utf-8', '<!doctype html><title>Zoneplan</title>'],
      [`${APP_ORIGIN}/main.js`, 'text/javascript; charset=utf-8', '(()=>{})();'],
      [`${APP_ORIGIN}/main.css`, 'text/css; charset=utf-8', 'body{margin:0}'],
      [`${APP_ORIGIN}/main.js.map`, 'application/json; charset=utf-8', '{"version":3}'],
      [`${APP_ORIGIN}/assets/layers-BWBAp2CZ.svg`, 'image/svg+xml', '<svg xmlns="http://www.w3.org/2000/svg"/>'],
      [`${APP_ORIGIN}/assets/marker-icon-2V3QKKVC.png`, 'image/png', null],
      [`${APP_ORIGIN}/notes.bin`, 'application/octet-stream', null],
      // A link that stays inside the folder is served as its target.
      [`${APP_ORIGIN}/link-in.css`, 'text/css; charset=utf-8', 'body{margin:0}'],
    ];
    for (const [url, type, text] of cases) {
      const res = await get(root, url);
      expect(res.status, url).toBe(200);
      expect(res.headers.get('content-type'), url).toBe(type);
      expect(res.headers.get('content-security-policy'), url).toBe(APP_CSP);
      expect(res.headers.get('x-content-type-options'), url).toBe('nosniff');
      if (text !== null) expect(await res.text(), url).toBe(text);
    }
    const png = new Uint8Array(await (await get(root, `${APP_ORIGIN}/assets/marker-icon-2V3QKKVC.png`)).arrayBuffer());
    expect([...png]).toEqual([0x89, 0x50, 0x4e, 0x47]);
  });

  it('refuses every path that leaves the folder: .., encoded dots and slashes, backslashes, NUL, drives, links out', async () => {
    const escapes = [
      `${APP_ORIGIN}/../secret.txt`,
      `${APP_ORIGIN}/assets/../../secret.txt`,
      `${APP_ORIGIN}/%2e%2e/secret.txt`,
      `${APP_ORIGIN}/%2E%2E/secret.txt`,
      `${APP_ORIGIN}/.%2e/secret.txt`,
      `${APP_ORIGIN}/%2e%2e%2fsecret.txt`,
      `${APP_ORIGIN}/assets/..%2F..%2Fsecret.txt`,
      `${APP_ORIGIN}/..%5csecret.txt`,
      `${APP_ORIGIN}/assets\\..\\..\\secret.txt`,
      `${APP_ORIGIN}/../renderer-private/index.html`,
      `${APP_ORIGIN}/./index.html`,
      `${APP_ORIGIN}/index.html%00.png`,
      `${APP_ORIGIN}/index.html\0`,
      `${APP_ORIGIN}/C:/Windows/win.ini`,
      `${APP_ORIGIN}/c:%5cWindows%5cwin.ini`,
      `${APP_ORIGIN}/link-out.txt`,
    ];
    for (const url of escapes) {
      const res = await get(root, url);
      expect(res.status, url).toBe(403);
      expect(await res.text(), url).not.toContain(SECRET);
      expect(res.headers.get('content-security-policy'), url).toBe(APP_CSP);
    }
    // An absolute path is taken inside the folder, where there is no such file.
    // A double-encoded dot is decoded once: a folder name, which is not there.
    for (const url of [`${APP_ORIGIN}${outside}`, `${APP_ORIGIN}//${outside}`, `${APP_ORIGIN}/${pathToFileURL(outside).href}`, `${APP_ORIGIN}/%252e%252e/secret.txt`]) {
      const res = await get(root, url);
      expect(res.status, url).toBe(404);
      expect(await res.text(), url).not.toContain(SECRET);
    }
    // The same requests as Electron hands them over (its URL parser has already removed dot segments).
    for (const url of [`${APP_ORIGIN}/../secret.txt`, `${APP_ORIGIN}/%2e%2e/%2e%2e/secret.txt`]) {
      const res = await appResponse(root, new Request(url));
      expect(res.status, url).not.toBe(200);
      expect(await res.text(), url).not.toContain(SECRET);
    }
  });

  it('answers 404 for unknown files, folders, dot files and other hosts or schemes', async () => {
    for (const url of [
      `${APP_ORIGIN}/missing.js`,
      `${APP_ORIGIN}/assets`,
      `${APP_ORIGIN}/assets/`,
      `${APP_ORIGIN}/.env`,
      'zoneplan-app://evil/index.html',
      'zoneplan-app://app.evil.example/index.html',
      'zoneplan-app://app:1/index.html',
      'zoneplan-app://app',
      pathToFileURL(path.join(root, 'index.html')).href,
      'https://app/index.html',
    ]) {
      const res = await get(root, url);
      expect(res.status, url).toBe(404);
      expect(await res.text(), url).toBe('not found');
      expect(res.headers.get('content-security-policy'), url).toBe(APP_CSP);
    }
    expect(resolveAppFile(path.join(root, 'no-such-folder'), APP_INDEX_URL)).toEqual({ status: 404 });
  });

  it('answers GET and HEAD only, and 400 for a broken escape', async () => {
    expect((await get(root, APP_INDEX_URL, 'POST')).status).toBe(405);
    expect((await get(root, APP_INDEX_URL, 'PUT')).status).toBe(405);
    const head = await get(root, APP_INDEX_URL, 'HEAD');
    expect(head.status).toBe(200);
    expect(head.headers.get('content-type')).toBe('text/html; charset=utf-8');
    expect(await head.text()).toBe('');
    expect((await get(root, `${APP_ORIGIN}/%E0%A4%A`)).status).toBe(400);
  });
});

describe('desktop app: the window on the app scheme', () => {
  let session: AppSession;
  let root: string;
  const e = fakeElectron(tempDir('userdata'));

  beforeAll(async () => {
    ({ root } = rendererFolder());
    const project = path.join(tempDir('desktop'), 'p.zoneplan');
    await createProject(project);
    FakeWindow.created.length = 0;
    // The stand-in's protocol throws when the scheme is registered after ready or served before it.
    ({ session } = await startDesktop(e, { distDir: path.dirname(root), project, log: () => {} }));
  });

  afterAll(async () => {
    await session.close();
  });

  it('registers the scheme before ready, serves dist/renderer on it and loads the window from it', async () => {
    expect(e.protocol.privileged.map((s) => s.scheme)).toEqual([APP_SCHEME]);
    expect([...e.protocol.handlers.keys()]).toEqual([APP_SCHEME]);
    const handler = e.protocol.handlers.get(APP_SCHEME)!;
    const index = await handler(new Request(APP_INDEX_URL));
    expect(index.status).toBe(200);
    expect(await index.text()).toBe('<!doctype html><title>Zoneplan</title>');
    expect((await handler(new Request(`${APP_ORIGIN}/main.css`))).headers.get('content-type')).toBe('text/css; charset=utf-8');
    expect((await handler(new Request(`${APP_ORIGIN}/missing.js`))).status).toBe(404);
    expect(FakeWindow.created).toHaveLength(1);
    expect(FakeWindow.created[0]!.loaded).toBe(APP_INDEX_URL);
  });

  it('trusts the app origin for IPC, and no longer the page over file://', async () => {
    const call = (url: string): Promise<WireReply> => e.handlers.get(channelOf('mode'))!({ senderFrame: { url, parent: null } }) as Promise<WireReply>;
    expect(await call(APP_INDEX_URL)).toEqual({ ok: true, value: 'desktop' });
    expect((await call(pathToFileURL(path.join(root, 'index.html')).href)).ok).toBe(false);
    expect((await call('zoneplan-app://other/index.html')).ok).toBe(false);
  });
});
