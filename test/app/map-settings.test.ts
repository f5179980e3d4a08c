/**
 * The map settings (online tiles) are kept on the main side in the user's data folder: shared by
 * the desktop window and browser mode (whose address changes with its port), written whole, and
 * a damaged or foreign file gives the offline outlines without being overwritten until a save.
 */
import { existsSync, readFileSync, writeFileSync } from 'node:fs';
import path from 'node:path';
import { afterEach, describe, expect, it } from 'vitest';
import { DEFAULT_MAP_SETTINGS, MAP_SETTINGS_FILE, MapSettingsStore } from '../../src/api/map-settings.js';
import { AppSession } from '../../src/api/session.js';
import { startBrowserMode } from '../../src/serve/browser-mode.js';
import { TOKEN_HEADER } from '../../src/api/wire.js';
import { tempDir } from './helpers.js';

const TILES = { url: 'https://tiles.example.org/{z}/{x}/{y}.png', attribution: '© Example tiles' };
const stops: (() => Promise<void>)[] = [];
afterEach(async () => {
  await Promise.all(stops.splice(0).map((s) => s()));
});

describe('MapSettingsStore', () => {
  it('starts on the offline outlines, saves tiles as JSON, and a new store reads them back', () => {
    const file = path.join(tempDir('map-settings'), 'sub', MAP_SETTINGS_FILE);
    const a = new MapSettingsStore(file);
    expect(a.get()).toEqual(DEFAULT_MAP_SETTINGS);
    expect(existsSync(file)).toBe(false);
    expect(a.set({ tiles: { url: `  ${TILES.url} `, attribution: ` ${TILES.attribution}` } })).toEqual({ tiles: TILES });
    expect(JSON.parse(readFileSync(file, 'utf8'))).toEqual({ tiles: TILES });
    expect(new MapSettingsStore(file).get()).toEqual({ tiles: TILES });
    a.set({ tiles: null });
    expect(new MapSettingsStore(file).get()).toEqual({ tiles: null });
  });

  it('gives the offline outlines for a damaged file or an insecure URL in it, and leaves the file alone', () => {
    const file = path.join(tempDir('map-settings'), MAP_SETTINGS_FILE);
    for (const text of ['{ not json', JSON.stringify({ tiles: { url: 'http://tiles.example.org/{z}/{x}/{y}.png', attribution: '' } }), JSON.stringify([1, 2])]) {
      writeFileSync(file, text);
      expect(new MapSettingsStore(file).get()).toEqual(DEFAULT_MAP_SETTINGS);
      expect(readFileSync(file, 'utf8')).toBe(text);
    }
  });

  it('keeps the settings for the session only without a file', async () => {
    const s = new AppSession({ mode: 'browser' });
    expect(await s.mapSettings()).toEqual(DEFAULT_MAP_SETTINGS);
    expect(await s.saveMapSettings({ tiles: TILES })).toEqual({ tiles: TILES });
    expect(await s.mapSettings()).toEqual({ tiles: TILES });
    expect(await new AppSession({ mode: 'browser' }).mapSettings()).toEqual(DEFAULT_MAP_SETTINGS);
  });
});

describe('browser mode: the map settings outlive the server and its port', () => {
  async function call(port: number, token: string, method: string, args: unknown[]): Promise<unknown> {
    const res = await fetch(`http://127.0.0.1:${port}/api/call/${method}`, { method: 'POST', headers: { [TOKEN_HEADER]: token, 'content-type': 'application/json' }, body: JSON.stringify({ args }) });
    const reply = (await res.json()) as { ok: boolean; value?: unknown; error?: { kind: string; message: string } };
    if (!reply.ok) throw new Error(`${reply.error!.kind}: ${reply.error!.message}`);
    return reply.value;
  }

  it('saves tiles through one server and finds them through the next (a new address)', async () => {
    const dataDir = tempDir('map-settings-data');
    const first = await startBrowserMode({ dataDir });
    stops.push(first.stop);
    expect(await call(first.server.port, first.server.token, 'mapSettings', [])).toEqual({ tiles: null });
    await call(first.server.port, first.server.token, 'saveMapSettings', [{ tiles: TILES }]);
    await expect(call(first.server.port, first.server.token, 'saveMapSettings', [{ tiles: { url: 'https://tiles.example.org/tile.png', attribution: '' } }])).rejects.toThrow(/usage: .*\{z\}, \{x\} and \{y\}/);
    await first.stop();
    stops.length = 0;
    expect(JSON.parse(readFileSync(path.join(dataDir, MAP_SETTINGS_FILE), 'utf8'))).toEqual({ tiles: TILES });
    const second = await startBrowserMode({ dataDir });
    stops.push(second.stop);
    expect(await call(second.server.port, second.server.token, 'mapSettings', [])).toEqual({ tiles: TILES });
  });
});
