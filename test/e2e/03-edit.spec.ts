/** Manual edits: move a stop (its zones' numbers change), undo and redo, lock, drag a centre to pin it. */
import type { PlanView, StopDetails } from '../../src/api/app-types.js';
import { expect, openPlanNamed, shot, test } from './fixtures.js';

const num = (s: string | null): number => Number((s ?? '').replace(/[,\s]/g, ''));
const PLAN = 'demo: 12 zones';

test('moving a stop changes its zones, undo and redo put it back and forth', async ({ openApp, app, errors }) => {
  const page = await openApp();
  await openPlanNamed(page, PLAN);
  const stop = await app.call<StopDetails>('stop', PLAN, 5);
  const view = await app.call<PlanView>('plan', PLAN);
  const from = view.zones.find((z) => z.zone === stop.zone)!;
  const to = view.zones.find((z) => z.zone !== stop.zone)!;
  const cell = (zone: number, col: string) => page.locator(`#zone-table tbody tr[data-zone="${zone}"] td[data-col=${col}]`);

  await page.locator('#p-stop summary').click();
  await page.fill('#stop-query', stop.id);
  await page.press('#stop-query', 'Enter');
  await expect(page.locator('#stop-details dl')).toHaveAttribute('data-stop-zone', String(stop.zone));
  await page.selectOption('#stop-zone', String(to.zone));
  await page.click('#stop-move');
  await expect(page.locator('#stop-details dl')).toHaveAttribute('data-stop-zone', String(to.zone));
  await expect.poll(async () => num(await cell(from.zone, 'stops').textContent())).toBe(from.stops - 1);
  expect(num(await cell(to.zone, 'stops').textContent())).toBe(to.stops + 1);
  expect(num(await cell(to.zone, 'demand').textContent())).toBeCloseTo(to.demand + stop.demand, 0);
  const edited = await app.call<PlanView>('plan', PLAN);
  expect(edited.zones.find((z) => z.zone === to.zone)!.stops).toBe(to.stops + 1);
  expect(edited.canUndo).toBe(true);
  await expect(page.locator('#undo')).toBeEnabled();
  await shot(page, '03-stop-moved');

  // Undo with the keyboard (Ctrl+Z, focus outside text fields), redo with Ctrl+Shift+Z, undo with the button.
  await page.locator('#undo').focus();
  await page.keyboard.press('Control+z');
  await expect(page.locator('#stop-details dl')).toHaveAttribute('data-stop-zone', String(stop.zone));
  expect(num(await cell(to.zone, 'stops').textContent())).toBe(to.stops);
  expect(num(await cell(from.zone, 'stops').textContent())).toBe(from.stops);
  await expect(page.locator('#redo')).toBeEnabled();
  await page.keyboard.press('Control+Shift+z');
  await expect(page.locator('#stop-details dl')).toHaveAttribute('data-stop-zone', String(to.zone));
  await page.click('#undo');
  await expect(page.locator('#stop-details dl')).toHaveAttribute('data-stop-zone', String(stop.zone));
  expect((await app.call<StopDetails>('stop', PLAN, 5)).zone).toBe(stop.zone);
  expect(errors).toEqual([]);
});

test('a stop can be locked and unlocked', async ({ openApp, app, errors }) => {
  const page = await openApp();
  await openPlanNamed(page, PLAN);
  await page.locator('#p-stop summary').click();
  await page.fill('#stop-query', '#7');
  await page.click('#stop-find button');
  await expect(page.locator('#stop-lock')).toHaveText('Lock');
  await page.click('#stop-lock');
  await expect(page.locator('#stop-lock')).toHaveText('Unlock');
  expect((await app.call<StopDetails>('stop', PLAN, 7)).locked).toBe(true);
  await page.click('#stop-lock');
  await expect(page.locator('#stop-lock')).toHaveText('Lock');
  expect((await app.call<StopDetails>('stop', PLAN, 7)).locked).toBe(false);
  expect(errors).toEqual([]);
});

test('dragging a centre pins it where it is dropped', async ({ openApp, app, errors }) => {
  const page = await openApp();
  await openPlanNamed(page, PLAN);
  const before = await app.call<PlanView>('plan', PLAN);
  const target = before.zones.find((z) => !z.fixed)!;
  const marker = page.locator(`.zp-centre[data-zone="${target.zone}"]`);
  const box = (await marker.boundingBox())!;
  const x = box.x + box.width / 2;
  const y = box.y + box.height / 2;
  await page.mouse.move(x, y);
  await page.mouse.down();
  await page.mouse.move(x + 20, y + 10, { steps: 5 });
  await page.mouse.move(x + 40, y + 20, { steps: 5 });
  await page.mouse.up();
  await expect(page.locator(`#zone-table tbody tr[data-zone="${target.zone}"] td`).first()).toContainText('⚓');
  const after = await app.call<PlanView>('plan', PLAN);
  const z = after.zones.find((r) => r.zone === target.zone)!;
  expect(z.fixed).toBe(true);
  expect(z.centre[0]).toBeGreaterThan(target.centre[0]);
  expect(z.centre[1]).toBeLessThan(target.centre[1]);
  await shot(page, '03-centre-pinned');
  // Undo puts the centre back where it was, free again.
  await page.click('#undo');
  await expect(page.locator('#redo')).toBeEnabled();
  await expect(page.locator(`#zone-table tbody tr[data-zone="${target.zone}"] td`).first()).not.toContainText('⚓');
  const undone = (await app.call<PlanView>('plan', PLAN)).zones.find((r) => r.zone === target.zone)!;
  expect(undone.fixed).toBe(false);
  expect(undone.centre[0]).toBeCloseTo(target.centre[0], 5);
  expect(undone.centre[1]).toBeCloseTo(target.centre[1], 5);
  expect(errors).toEqual([]);
});

test('clicking a stop on the map opens its details', async ({ openApp, app, errors }) => {
  const page = await openApp();
  await openPlanNamed(page, PLAN);
  // A painted stop pixel that no marker, label or control covers, in page coordinates.
  const spot = await page.locator('canvas.zp-stops').evaluate((c: any) => {
    const g = globalThis as any; // in the page
    const r = c.getBoundingClientRect();
    const d = c.getContext('2d').getImageData(0, 0, c.width, c.height).data;
    for (let y = 40; y < c.height - 40; y += 3) {
      for (let x = 40; x < c.width - 40; x += 3) {
        if (d[4 * (y * c.width + x) + 3] !== 255) continue;
        const el = g.document.elementFromPoint(r.left + x, r.top + y);
        if (el && !el.closest('.leaflet-marker-icon, .leaflet-tooltip, .leaflet-control')) return { x: r.left + x, y: r.top + y };
      }
    }
    return null;
  });
  expect(spot).not.toBeNull();
  await page.mouse.click(spot!.x, spot!.y);
  const dl = page.locator('#stop-details dl');
  await expect(dl).toBeVisible();
  await expect(page.locator('#p-stop')).toHaveJSProperty('open', true);
  const index = Number(await dl.getAttribute('data-stop-index'));
  const stop = await app.call<StopDetails>('stop', PLAN, index);
  await expect(dl).toContainText(stop.id);
  await expect(dl).toHaveAttribute('data-stop-zone', String(stop.zone));
  await shot(page, '03-stop-clicked');
  expect(errors).toEqual([]);
});
