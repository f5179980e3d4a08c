/**
 * The online tile setting: saved on the main side (it outlives a reload and browser mode's
 * changing address), used by the map (tile requests go to the URL given; answered here with a
 * blank PNG, the machine being offline), refused when not https with {z}/{x}/{y}, and a setting
 * an earlier window kept in the page's own storage is carried over once.
 */
import type { MapSettings } from '../../src/api/app-types.js';
import { expect, shot, test } from './fixtures.js';

// A 1x1 transparent PNG to answer tile requests with (a commonly used blank image; no source).
const PNG = Buffer.from('iVBORw0KGgoAAAANSUhEUgAAAAEAAAABCAYAAAAfFcSJAAAADUlEQVR42mNkYPhfDwAChwGA60e6kgAAAABJRU5ErkJggg==', 'base64');
const URL_A = 'https://tiles-a.example.org/{z}/{x}/{y}.png';
const URL_B = 'https://tiles-b.example.org/{z}/{x}/{y}.png';

/** The page's storage, as the functions run in the page see it (the specs are typed without the DOM). */
interface PageStorage {
  readonly localStorage: { getItem(key: string): string | null; setItem(key: string, value: string): void };
}

test.describe.configure({ mode: 'serial' });

test('tiles set in the panel are used by the map and kept after a reload', async ({ openApp, app, page, errors }) => {
  const asked: string[] = [];
  await page.route('https://tiles-a.example.org/**', (route) => {
    asked.push(route.request().url());
    return route.fulfill({ status: 200, contentType: 'image/png', body: PNG });
  });
  await openApp();
  await page.locator('#p-map summary').click();
  // Refused: not https.
  await page.fill('#tiles-url', 'http://tiles-a.example.org/{z}/{x}/{y}.png');
  await page.click('#tiles-form button[type=submit]');
  await expect(page.locator('#status')).toContainText('must be https');
  expect((await app.call<MapSettings>('mapSettings')).tiles).toBeNull();
  // Taken from the keyboard.
  await page.fill('#tiles-url', URL_A);
  // Markup typed into the attribution is shown as text.
  await page.fill('#tiles-attr', '<i>x</i>');
  await page.press('#tiles-attr', 'Enter');
  await expect(page.locator('.leaflet-control-attribution')).toContainText('<i>x</i>');
  await expect(page.locator('.leaflet-control-attribution i')).toHaveCount(0);
  await page.fill('#tiles-attr', '© Tiles A (test)');
  await page.press('#tiles-attr', 'Enter');
  await expect.poll(async () => (await app.call<MapSettings>('mapSettings')).tiles).toEqual({ url: URL_A, attribution: '© Tiles A (test)' });
  await expect.poll(() => asked.length).toBeGreaterThan(0);
  expect(asked.every((u) => /^https:\/\/tiles-a\.example\.org\/\d+\/\d+\/\d+\.png$/.test(u))).toBe(true);
  await expect(page.locator('.leaflet-control-attribution')).toContainText('© Tiles A (test)');
  await page.reload();
  await page.waitForSelector('body[data-ready="1"]');
  await expect(page.locator('#tiles-url')).toHaveValue(URL_A);
  await expect(page.locator('.leaflet-control-attribution')).toContainText('© Tiles A (test)');
  await shot(page, '07-online-tiles');
  // Back to the offline outlines.
  await page.locator('#p-map summary').click();
  await page.click('#tiles-off');
  await expect.poll(async () => (await app.call<MapSettings>('mapSettings')).tiles).toBeNull();
  await expect(page.locator('.leaflet-control-attribution')).not.toContainText('Tiles A');
  expect(errors).toEqual([]);
});

test('a tile setting kept in the page storage by an earlier window is carried over once', async ({ app, page, errors }) => {
  await page.route('https://tiles-b.example.org/**', (route) => route.fulfill({ status: 200, contentType: 'image/png', body: PNG }));
  expect((await app.call<MapSettings>('mapSettings')).tiles).toBeNull();
  await page.goto(app.url);
  await page.waitForSelector('body[data-ready="1"]');
  await page.evaluate((url) => (globalThis as unknown as PageStorage).localStorage.setItem('zoneplan.tiles', JSON.stringify({ url, attr: '© Tiles B (test)' })), URL_B);
  await page.reload();
  await page.waitForSelector('body[data-ready="1"]');
  await expect(page.locator('#tiles-url')).toHaveValue(URL_B);
  await expect.poll(async () => (await app.call<MapSettings>('mapSettings')).tiles).toEqual({ url: URL_B, attribution: '© Tiles B (test)' });
  expect(await page.evaluate(() => (globalThis as unknown as PageStorage).localStorage.getItem('zoneplan.tiles'))).toBeNull();
  await app.call('saveMapSettings', { tiles: null });
  expect(errors).toEqual([]);
});
