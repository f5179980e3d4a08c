/**
 * A zone centre moved and pinned with the keyboard only: C opens the centre bar on a zone, N
 * goes to the next one, the arrow keys nudge the centre by the step the bar shows, + and - change
 * the step, Escape cancels, Enter pins; undo frees the centre where it was, redo pins it again,
 * U unpins it; a pinned centre clicked on the map offers Unpin. The centre's position and pinned
 * state are read back from the Api.
 */
import type { Page } from '@playwright/test';
import type { PlanView } from '../../src/api/app-types.js';
import type { ZoneRow } from '../../src/api/types.js';
import { expect, openPlanNamed, shot, test, type AppServer } from './fixtures.js';

const PLAN = 'demo: 12 zones';
/** Metres per degree of latitude on the app's sphere (6371.0088 km). */
const M_PER_DEG = (6_371_008.8 * Math.PI) / 180;

async function zone(app: AppServer, label: number): Promise<ZoneRow> {
  return (await app.call<PlanView>('plan', PLAN)).zones.find((z) => z.zone === label)!;
}

/** The bar's readings (data attributes). */
async function bar(page: Page): Promise<{ zone: number; lon: number; lat: number; stepM: number; fixed: boolean }> {
  const d = await page.locator('#centre-edit').evaluate((el: any) => ({ ...el.dataset }) as Record<string, string>);
  return { zone: Number(d['zone']), lon: Number(d['lon']), lat: Number(d['lat']), stepM: Number(d['stepM']), fixed: d['fixed'] === '1' };
}

/** Screen x, y of a centre marker's middle. */
async function markerAt(page: Page, label: number): Promise<{ x: number; y: number }> {
  const b = (await page.locator(`.zp-centre[data-zone="${label}"]`).boundingBox())!;
  return { x: b.x + b.width / 2, y: b.y + b.height / 2 };
}

test('a centre is moved and pinned with the keyboard only, then undone, redone and unpinned', async ({ openApp, app, errors }) => {
  const page = await openApp();
  await openPlanNamed(page, PLAN);
  const rows = page.locator('#zone-table tbody tr');
  const first = Number(await rows.nth(0).getAttribute('data-zone'));
  const second = Number(await rows.nth(1).getAttribute('data-zone'));
  const centreBar = page.locator('#centre-edit');
  await expect(centreBar).toBeHidden();

  // C opens the bar on the first zone of the table; N goes to the next one.
  await page.keyboard.press('c');
  await expect(centreBar).toBeVisible();
  await expect(centreBar).toBeFocused();
  await expect(centreBar).toHaveAttribute('data-zone', String(first));
  await page.keyboard.press('n');
  await expect(centreBar).toHaveAttribute('data-zone', String(second));
  const target = await zone(app, second);
  expect(target.fixed).toBe(false);
  // Focus shows: the bar's outline, the marker's ring on the map, the zone's row marked.
  expect(await centreBar.evaluate((el: any) => (globalThis as any).getComputedStyle(el).outlineStyle as string)).not.toBe('none');
  await expect(page.locator(`.zp-centre[data-zone="${second}"]`)).toHaveClass(/zp-centre-active/);
  await expect(page.locator(`.zp-centre[data-zone="${first}"]`)).not.toHaveClass(/zp-centre-active/);
  await expect(page.locator(`#zone-table tbody tr[data-zone="${second}"]`)).toHaveClass(/zp-row-active/);
  const start = await bar(page);
  expect(start.lon).toBeCloseTo(target.centre[0], 9);
  expect(start.lat).toBeCloseTo(target.centre[1], 9);
  expect(start.stepM).toBeGreaterThan(0);
  // The step is on screen, and + / - change it.
  await expect(centreBar).toContainText('Step');
  await page.keyboard.press('+');
  expect((await bar(page)).stepM).toBeGreaterThan(start.stepM);
  await page.keyboard.press('-');
  expect((await bar(page)).stepM).toBe(start.stepM);
  const step = start.stepM;

  // Arrow keys nudge the marker (measured against another centre, in case the map pans).
  const other = async () => {
    const [a, b] = [await markerAt(page, second), await markerAt(page, first)];
    return { dx: a.x - b.x, dy: a.y - b.y };
  };
  const before = await other();
  await page.keyboard.press('ArrowRight');
  await page.keyboard.press('ArrowRight');
  await page.keyboard.press('ArrowRight');
  await page.keyboard.press('ArrowUp');
  await page.keyboard.press('ArrowUp');
  const moved = await bar(page);
  expect(moved.lat - start.lat).toBeCloseTo((2 * step) / M_PER_DEG, 9);
  expect(moved.lon - start.lon).toBeCloseTo((3 * step) / (M_PER_DEG * Math.cos((start.lat * Math.PI) / 180)), 9);
  await expect(centreBar).toContainText('moved');
  const after = await other();
  expect(after.dx).toBeGreaterThan(before.dx + 5);
  expect(after.dy).toBeLessThan(before.dy - 5);
  await shot(page, '06-centre-keyboard-moving');

  // Escape cancels: nothing recorded, the focus back on the zone's row.
  await page.keyboard.press('Escape');
  await expect(centreBar).toBeHidden();
  await expect(page.locator(`#zone-table tbody tr[data-zone="${second}"]`)).toBeFocused();
  const cancelled = await zone(app, second);
  expect(cancelled.fixed).toBe(false);
  expect(cancelled.centre).toEqual(target.centre);

  // C on the focused row, Shift+arrow for ten steps, arrows, then Enter pins.
  await page.keyboard.press('c');
  await expect(centreBar).toHaveAttribute('data-zone', String(second));
  await page.keyboard.press('Shift+ArrowRight');
  await page.keyboard.press('ArrowDown');
  const shown = await bar(page);
  expect(shown.lon).toBeGreaterThan(start.lon);
  expect(shown.lat).toBeLessThan(start.lat);
  await page.keyboard.press('Enter');
  await expect(centreBar).toBeHidden();
  const row = page.locator(`#zone-table tbody tr[data-zone="${second}"]`);
  await expect(row.locator('td').first()).toContainText('⚓');
  await expect(row).toBeFocused();
  const pinned = await zone(app, second);
  expect(pinned.fixed).toBe(true);
  expect(pinned.centre[0]).toBeCloseTo(shown.lon, 9);
  expect(pinned.centre[1]).toBeCloseTo(shown.lat, 9);
  expect(pinned.meanKm).not.toBeCloseTo(target.meanKm, 6);
  await shot(page, '06-centre-keyboard-pinned');

  // Undo (Ctrl+Z): free again, back where it was, the figures as before.
  await page.keyboard.press('Control+z');
  await expect(row.locator('td').first()).not.toContainText('⚓');
  const undone = await zone(app, second);
  expect(undone.fixed).toBe(false);
  expect(undone.centre[0]).toBeCloseTo(target.centre[0], 9);
  expect(undone.centre[1]).toBeCloseTo(target.centre[1], 9);
  expect(undone.meanKm).toBeCloseTo(target.meanKm, 9);

  // Redo pins it again; then U in the bar unpins it where it is, and undo pins it back.
  await page.keyboard.press('Control+Shift+z');
  await expect(row.locator('td').first()).toContainText('⚓');
  expect((await zone(app, second)).fixed).toBe(true);
  // The focus stays on the zone's row through undo and redo.
  await expect(row).toBeFocused();
  await page.keyboard.press('c');
  await expect(centreBar).toHaveAttribute('data-fixed', '1');
  await expect(centreBar.locator('[data-centre-action=unpin]')).toBeEnabled();
  await page.keyboard.press('u');
  await expect(centreBar).toBeHidden();
  await expect(row.locator('td').first()).not.toContainText('⚓');
  const freed = await zone(app, second);
  expect(freed.fixed).toBe(false);
  expect(freed.centre[0]).toBeCloseTo(shown.lon, 9);
  expect(freed.centre[1]).toBeCloseTo(shown.lat, 9);
  await page.keyboard.press('Control+z');
  await expect(row.locator('td').first()).toContainText('⚓');
  expect((await zone(app, second)).fixed).toBe(true);
  // And the pin itself undone: the plan as it was.
  await page.keyboard.press('Control+z');
  await expect(row.locator('td').first()).not.toContainText('⚓');
  const end = await zone(app, second);
  expect(end.fixed).toBe(false);
  expect(end.centre[0]).toBeCloseTo(target.centre[0], 9);
  expect(end.centre[1]).toBeCloseTo(target.centre[1], 9);
  expect(errors).toEqual([]);
});

test('a pinned centre clicked on the map offers Unpin, which frees it where it is', async ({ openApp, app, errors }) => {
  const page = await openApp();
  await openPlanNamed(page, PLAN);
  const label = Number(await page.locator('#zone-table tbody tr').nth(2).getAttribute('data-zone'));
  const target = await zone(app, label);
  expect(target.fixed).toBe(false);
  // Pinned by dragging would do as well; the Api is quicker to aim.
  await app.call('edit', PLAN, { kind: 'pin-centre', zone: label, lon: target.centre[0] + 0.05, lat: target.centre[1] });
  await openPlanNamed(page, PLAN);
  const row = page.locator(`#zone-table tbody tr[data-zone="${label}"]`);
  await expect(row.locator('td').first()).toContainText('⚓');
  const at = await markerAt(page, label);
  await page.mouse.click(at.x, at.y);
  const centreBar = page.locator('#centre-edit');
  await expect(centreBar).toBeVisible();
  await expect(centreBar).toHaveAttribute('data-zone', String(label));
  await expect(centreBar).toHaveAttribute('data-fixed', '1');
  await centreBar.locator('[data-centre-action=unpin]').click();
  await expect(centreBar).toBeHidden();
  await expect(row.locator('td').first()).not.toContainText('⚓');
  const freed = await zone(app, label);
  expect(freed.fixed).toBe(false);
  expect(freed.centre[0]).toBeCloseTo(target.centre[0] + 0.05, 9);
  expect(freed.centre[1]).toBeCloseTo(target.centre[1], 9);
  // Undo pins it again; a second undo takes the pin back too.
  await page.click('#undo');
  await expect(row.locator('td').first()).toContainText('⚓');
  await page.click('#undo');
  await expect(row.locator('td').first()).not.toContainText('⚓');
  const end = await zone(app, label);
  expect(end.fixed).toBe(false);
  expect(end.centre[0]).toBeCloseTo(target.centre[0], 9);
  expect(errors).toEqual([]);
});

test('the keyboard help lists the centre keys, and ? opens it', async ({ openApp, errors }) => {
  const page = await openApp();
  const help = page.locator('#p-keys');
  await expect(help).toHaveJSProperty('open', false);
  await page.keyboard.press('?');
  await expect(help).toHaveJSProperty('open', true);
  await expect(help.locator('summary')).toBeFocused();
  for (const text of ['Move a zone centre', 'one step west, east, north or south', 'pin it where it is shown', 'unpin a pinned centre', 'cancel']) await expect(help).toContainText(text);
  expect(errors).toEqual([]);
});
