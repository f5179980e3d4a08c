/** The demo project opens: map, zone table (equal to what the Api returns), legend, note; keyboard. */
import type { PlanView, ProjectInfo } from '../../src/api/app-types.js';
import { expect, shot, test } from './fixtures.js';

const num = (s: string | null): number => Number((s ?? '').replace(/[,\s]/g, ''));

test('the demo opens with its map and a zone table equal to the Api', async ({ openApp, app, errors }) => {
  const page = await openApp();
  const project = await app.call<ProjectInfo>('project');
  expect(project.plans.length).toBeGreaterThan(0);
  const name = await page.locator('body').getAttribute('data-plan-name');
  expect(project.plans.map((p) => p.name)).toContain(name);
  const view = await app.call<PlanView>('plan', name);

  // Map: the stops canvas holds every stop and has coloured pixels; one centre marker per zone.
  await expect(page.locator('#map')).toHaveAttribute('data-stop-count', String(view.info.stops));
  const painted = await page.locator('canvas.zp-stops').evaluate((c: any) => {
    const d = c.getContext('2d')!.getImageData(0, 0, c.width, c.height).data;
    let n = 0;
    for (let i = 3; i < d.length; i += 4) if (d[i]! > 0) n++;
    return n;
  });
  expect(painted).toBeGreaterThan(1000);
  await expect(page.locator('.zp-centre')).toHaveCount(view.zones.length);
  await expect(page.locator('.zp-legend li')).toHaveCount(view.zones.length);
  await expect(page.locator('.leaflet-control-scale')).toBeVisible();
  await expect(page.locator('.leaflet-overlay-pane canvas').first()).toBeVisible();
  await expect(page.locator('#distance-note')).toContainText(/drive times/);
  await expect(page.locator('#distance-note')).toContainText(/labour rules/);

  // Zone table: one row per zone, the same figures as the Api's PlanView.
  const rows = page.locator('#zone-table tbody tr');
  await expect(rows).toHaveCount(view.zones.length);
  for (const z of view.zones) {
    const row = page.locator(`#zone-table tbody tr[data-zone="${z.zone}"]`);
    expect(num(await row.locator('td[data-col=stops]').textContent())).toBe(z.stops);
    expect(num(await row.locator('td[data-col=demand]').textContent())).toBeCloseTo(z.demand, 0);
    expect(num(await row.locator('td[data-col=meanKm]').textContent())).toBeCloseTo(z.meanKm, 1);
    expect(num(await row.locator('td[data-col=maxKm]').textContent())).toBeCloseTo(z.maxKm, 1);
  }
  expect(view.zones.reduce((a, z) => a + z.stops, 0)).toBe(view.info.stops);
  await shot(page, '01-demo');
  expect(errors).toEqual([]);
});

test('the zone table sorts by header and zooms to a zone, by keyboard', async ({ openApp, errors }) => {
  const page = await openApp();
  const header = page.locator('#zone-table th[data-key=stops] button');
  await header.focus();
  await page.keyboard.press('Enter');
  await expect(page.locator('#zone-table th[data-key=stops]')).toHaveAttribute('aria-sort', 'ascending');
  const stops = async () => (await page.locator('#zone-table tbody td[data-col=stops]').allTextContents()).map(num);
  const asc = await stops();
  expect(asc).toEqual([...asc].sort((a, b) => a - b));
  await page.locator('#zone-table th[data-key=stops] button').focus();
  await page.keyboard.press('Enter');
  await expect(page.locator('#zone-table th[data-key=stops]')).toHaveAttribute('aria-sort', 'descending');
  const desc = await stops();
  expect(desc).toEqual([...desc].sort((a, b) => b - a));

  // Enter on a row zooms the map to that zone: the scale bar changes.
  const before = await page.locator('.leaflet-control-scale-line').textContent();
  await page.locator('#zone-table tbody tr').last().focus();
  await page.keyboard.press('Enter');
  await expect(page.locator('.leaflet-control-scale-line')).not.toHaveText(before ?? '');
  expect(errors).toEqual([]);
});

test('every panel is reachable with Tab, shows focus, and opens without a mouse', async ({ openApp, errors }) => {
  const page = await openApp();
  const panels = await page.locator('aside details').evaluateAll((ds) => ds.map((d) => d.id));
  expect(panels.length).toBeGreaterThanOrEqual(8);
  const reached = new Set<string>();
  let focusShown = true;
  for (let i = 0; i < 250 && reached.size < panels.length; i++) {
    await page.keyboard.press('Tab');
    const info = await page.evaluate(() => {
      const g = globalThis as any; // in the page (no DOM types in the Node tsconfig)
      const el = g.document.activeElement;
      if (!el || el.tagName !== 'SUMMARY') return null;
      return { panel: el.parentElement?.id ?? '', outline: g.getComputedStyle(el).outlineStyle as string };
    });
    if (info) {
      reached.add(info.panel);
      if (info.outline === 'none') focusShown = false;
      // Closed panels open with Enter, so the Tab walk goes on through their controls.
      const open = await page.locator(`#${info.panel}`).evaluate((d: any) => d.open as boolean);
      if (!open) {
        await page.keyboard.press('Enter');
        await expect(page.locator(`#${info.panel}`)).toHaveJSProperty('open', true);
      }
    }
  }
  expect([...reached].sort()).toEqual([...panels].sort());
  expect(focusShown).toBe(true);
  // Every form control in the panels has an accessible name.
  const unnamed = await page.locator('aside input, aside select, aside button').evaluateAll((els) =>
    els.filter((e) => {
      const id = e.id;
      const label = id ? (globalThis as any).document.querySelector(`label[for="${id}"]`) : null;
      return !(label || e.closest('label') || e.getAttribute('aria-label') || (e.textContent ?? '').trim());
    }).map((e) => e.outerHTML.slice(0, 80)),
  );
  expect(unnamed).toEqual([]);
  await shot(page, '01-keyboard-panels-open');
  expect(errors).toEqual([]);
});
