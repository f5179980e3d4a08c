/**
 * Shared pieces of the end-to-end specs: the server started by global-setup.ts, the Api called
 * directly over its wire protocol (src/api/wire.ts) with the page's token, the map window opened
 * and ready, generated stop files, screenshots under test-results/screenshots/.
 */
import { test as base, expect, type APIRequestContext, type Page } from '@playwright/test';
import { mkdirSync, writeFileSync } from 'node:fs';
import path from 'node:path';
import type { WireReply } from '../../src/api/wire.js';

export interface AppServer {
  readonly url: string;
  readonly origin: string;
  readonly token: string;
  /** Calls one Api method over HTTP, as the renderer does, and returns its value (throws on an error reply). */
  call<T = unknown>(method: string, ...args: unknown[]): Promise<T>;
}

function server(request: APIRequestContext): AppServer {
  const url = process.env['ZONEPLAN_E2E_URL'];
  if (!url) throw new Error('ZONEPLAN_E2E_URL is not set: run the specs through playwright.config.ts (its global setup starts zoneplan serve)');
  const u = new URL(url);
  const token = u.searchParams.get('token') ?? '';
  return {
    url,
    origin: u.origin,
    token,
    async call<T>(method: string, ...args: unknown[]): Promise<T> {
      const res = await request.post(`${u.origin}/api/call/${method}`, { data: { args }, headers: { 'x-zoneplan-token': token } });
      const reply = (await res.json()) as WireReply<T>;
      if (!reply.ok) throw new Error(`${method}: ${reply.error.kind}: ${reply.error.message}`);
      return reply.value;
    },
  };
}

export const test = base.extend<{ app: AppServer; errors: string[]; openApp: () => Promise<Page> }>({
  app: async ({ request }, use) => {
    await use(server(request));
  },
  /** Console errors and page errors seen during the test; each spec checks it stayed empty. */
  errors: async ({ page }, use) => {
    const errors: string[] = [];
    page.on('console', (m) => {
      if (m.type() === 'error') errors.push(m.text());
    });
    page.on('pageerror', (e) => errors.push(e.message));
    await use(errors);
  },
  openApp: async ({ page, app, errors }, use) => {
    void errors;
    await use(async () => {
      await page.goto(app.url);
      await page.waitForSelector('body[data-ready="1"]');
      return page;
    });
  },
});

export { expect };

export async function shot(page: Page, name: string): Promise<void> {
  mkdirSync('test-results/screenshots', { recursive: true });
  await page.screenshot({ path: path.join('test-results', 'screenshots', `${name}.png`) });
}

/** A deterministic stops CSV (id, lat, lon, parcels) in clusters around a point. */
export function stopsCsv(n: number, seed = 1, centre: [lon: number, lat: number] = [10.8, 48.2]): string {
  let s = seed >>> 0 || 1;
  const rnd = (): number => {
    s ^= s << 13;
    s >>>= 0;
    s ^= s >>> 17;
    s ^= s << 5;
    s >>>= 0;
    return s / 4294967296;
  };
  const clusters = Array.from({ length: 9 }, () => [centre[0] + (rnd() - 0.5) * 1.6, centre[1] + (rnd() - 0.5) * 1.0] as const);
  const lines = ['stop_id,lat,lon,parcels'];
  for (let i = 0; i < n; i++) {
    const c = clusters[Math.floor(rnd() * clusters.length)]!;
    const r = Math.sqrt(-2 * Math.log(rnd() + 1e-12)) * 0.08;
    const a = rnd() * 2 * Math.PI;
    lines.push(`S${String(i + 1).padStart(6, '0')},${(c[1] + r * Math.sin(a)).toFixed(6)},${(c[0] + r * Math.cos(a) * 1.5).toFixed(6)},${1 + Math.floor(rnd() * 4)}`);
  }
  return `${lines.join('\n')}\n`;
}

export function writeTemp(name: string, text: string): string {
  const dir = path.join(process.env['ZONEPLAN_E2E_DATA'] ?? 'test-results', 'files');
  mkdirSync(dir, { recursive: true });
  const file = path.join(dir, name);
  writeFileSync(file, text);
  return file;
}

/** Waits for a plan run started in the window to end, and returns its final state. */
export async function waitRunEnd(page: Page, timeout = 60_000): Promise<string> {
  const bar = page.locator('#run-progress');
  await expect(bar).not.toHaveAttribute('data-run-state', /running|idle/, { timeout });
  return (await bar.getAttribute('data-run-state')) ?? '';
}

/** Opens a saved plan from the Plan versions panel (opening the panel first). */
export async function openPlanNamed(page: Page, name: string): Promise<void> {
  const panel = page.locator('#p-versions');
  if (!(await panel.evaluate((d: any) => d.open as boolean))) await panel.locator('summary').click();
  await page.locator(`#plan-list button[data-plan="${name}"]`).click();
  await expect(page.locator('body')).toHaveAttribute('data-plan-name', name);
}
