/**
 * The panels used from the keyboard alone: every control below is reached with Tab (never
 * clicked or focused by the test) and worked with Enter, Space, arrows and typing: an import
 * through the file chooser, a plan run, a stop moved and locked, two plans compared, an export.
 */
import type { Page } from '@playwright/test';
import type { PlanView, ProjectInfo, StopDetails } from '../../src/api/app-types.js';
import type { PlanComparison } from '../../src/api/types.js';
import { expect, stopsCsv, test, waitRunEnd, writeTemp } from './fixtures.js';

/** Presses Tab until the element matching `selector` has the focus (at most `max` presses). */
async function tabTo(page: Page, selector: string, max = 400): Promise<void> {
  for (let i = 0; i < max; i++) {
    if (await page.locator(selector).evaluate((el) => el === (globalThis as any).document.activeElement)) return; // in the page
    await page.keyboard.press('Tab');
  }
  throw new Error(`${selector} was not reached with ${max} presses of Tab`);
}

/** Opens a panel from the keyboard: Tab to its heading, Enter when it is closed. */
async function openPanel(page: Page, id: string): Promise<void> {
  await tabTo(page, `#${id} > summary`);
  if (!(await page.locator(`#${id}`).evaluate((d: any) => d.open as boolean))) await page.keyboard.press('Enter');
  await expect(page.locator(`#${id}`)).toHaveJSProperty('open', true);
}

test.describe.configure({ mode: 'serial' });

test('a stops file is chosen and imported from the keyboard', async ({ openApp, app, errors }) => {
  const page = await openApp();
  const before = (await app.call<ProjectInfo>('project')).stopSets.length;
  await openPanel(page, 'p-import');
  await tabTo(page, '#import-file');
  const chooser = page.waitForEvent('filechooser');
  await page.keyboard.press('Space');
  await (await chooser).setFiles(writeTemp('e2e-keyboard.csv', stopsCsv(300, 21)));
  await expect(page.locator('#import-report')).toContainText('300');
  await expect.poll(async () => (await app.call<ProjectInfo>('project')).stopSets.length).toBe(before + 1);
  expect(errors).toEqual([]);
});

test('a plan is run from the keyboard and saved', async ({ openApp, app, errors }) => {
  const page = await openApp();
  await openPanel(page, 'p-run');
  await tabTo(page, '#run-zones');
  await page.keyboard.press('Control+a');
  await page.keyboard.type('5');
  await tabTo(page, '#run-name');
  await page.keyboard.press('Control+a');
  await page.keyboard.type('e2e keyboard run');
  await tabTo(page, '#run-start');
  await page.keyboard.press('Enter');
  expect(await waitRunEnd(page)).toBe('done');
  await expect(page.locator('body')).toHaveAttribute('data-plan-name', 'e2e keyboard run');
  expect((await app.call<PlanView>('plan', 'e2e keyboard run')).zones).toHaveLength(5);
  expect(errors).toEqual([]);
});

test('a stop is found, moved to another zone and locked from the keyboard', async ({ openApp, app, errors }) => {
  const page = await openApp();
  // The newest plan opens first: the one run above.
  const plan = 'e2e keyboard run';
  await expect(page.locator('body')).toHaveAttribute('data-plan-name', plan);
  const stop = await app.call<StopDetails>('stop', plan, 7);
  await openPanel(page, 'p-stop');
  await tabTo(page, '#stop-query');
  await page.keyboard.type(stop.id);
  await page.keyboard.press('Enter');
  const details = page.locator('#stop-details dl');
  await expect(details).toHaveAttribute('data-stop-zone', String(stop.zone));
  // The zone list: one arrow press picks the next zone in it.
  await tabTo(page, '#stop-zone');
  const options = await page.locator('#stop-zone option').evaluateAll((os) => os.map((o: any) => Number(o.value)));
  const at = options.indexOf(stop.zone);
  const to = options[at + 1 < options.length ? at + 1 : at - 1]!;
  await page.keyboard.press(at + 1 < options.length ? 'ArrowDown' : 'ArrowUp');
  await expect(page.locator('#stop-zone')).toHaveValue(String(to));
  await tabTo(page, '#stop-move');
  await page.keyboard.press('Enter');
  await expect(details).toHaveAttribute('data-stop-zone', String(to));
  expect((await app.call<StopDetails>('stop', plan, 7)).zone).toBe(to);
  await tabTo(page, '#stop-lock');
  await page.keyboard.press('Enter');
  await expect.poll(async () => (await app.call<StopDetails>('stop', plan, 7)).locked).toBe(true);
  expect((await app.call<StopDetails>('stop', plan, 7)).zone).toBe(to);
  expect(errors).toEqual([]);
});

test('two plans are compared and a plan exported from the keyboard', async ({ openApp, app, errors }) => {
  const page = await openApp();
  await openPanel(page, 'p-versions');
  // The first plan of the list against the last.
  await tabTo(page, '#compare-a');
  await page.keyboard.press('Home');
  await tabTo(page, '#compare-b');
  await page.keyboard.press('End');
  const a = await page.locator('#compare-a').inputValue();
  const b = await page.locator('#compare-b').inputValue();
  expect(a).not.toBe(b);
  await tabTo(page, '#compare-form button[type=submit]');
  await page.keyboard.press('Enter');
  const expected = await app.call<PlanComparison>('compare', a, b);
  await expect(page.locator('#compare-result p[data-changed]')).toHaveAttribute('data-changed', String(expected.changedStops));
  await openPanel(page, 'p-export');
  await tabTo(page, '[data-export="plan"]');
  const download = page.waitForEvent('download');
  await page.keyboard.press('Enter');
  expect((await download).suggestedFilename()).toMatch(/\.geojson$/);
  expect(errors).toEqual([]);
});
