/** Import a stops file (good: a new stop set; bad: row-numbered problems and nothing imported), then run a balanced plan. */
import type { PlanView, ProjectInfo } from '../../src/api/app-types.js';
import { expect, shot, stopsCsv, test, waitRunEnd, writeTemp } from './fixtures.js';

const num = (s: string | null): number => Number((s ?? '').replace(/[,\s]/g, ''));

test('a good CSV becomes a new stop set', async ({ openApp, app, errors }) => {
  const page = await openApp();
  const before = await app.call<ProjectInfo>('project');
  const file = writeTemp('e2e-good.csv', stopsCsv(800, 11));
  await page.setInputFiles('#import-file', file);
  const ok = page.locator('#import-report [data-import=ok]');
  await expect(ok).toBeVisible();
  await expect(ok).toContainText('800 stops');
  const after = await app.call<ProjectInfo>('project');
  expect(after.stopSets.length).toBe(before.stopSets.length + 1);
  const added = after.stopSets[after.stopSets.length - 1]!;
  expect(added.stops).toBe(800);
  expect(await ok.getAttribute('data-stop-set')).toBe(String(added.id));
  await expect(page.locator('#run-stopset')).toHaveValue(String(added.id));
  await shot(page, '02-import-good');

  // The same by dropping a file on the window.
  const dropped = await page.evaluateHandle((text: string) => {
    const g = globalThis as any; // in the page
    const dt = new g.DataTransfer();
    dt.items.add(new g.File([text], 'e2e-dropped.csv', { type: 'text/csv' }));
    return dt;
  }, stopsCsv(300, 12));
  await page.dispatchEvent('#map', 'dragenter', { dataTransfer: dropped });
  await expect(page.locator('#drop-overlay')).toBeVisible();
  await page.dispatchEvent('#map', 'drop', { dataTransfer: dropped });
  await expect(page.locator('#drop-overlay')).toBeHidden();
  await expect(page.locator('#import-report [data-import=ok]')).toContainText('300 stops');
  expect((await app.call<ProjectInfo>('project')).stopSets.length).toBe(before.stopSets.length + 2);
  expect(errors).toEqual([]);
});

test('a bad CSV lists its problems by row and imports nothing', async ({ openApp, app, errors }) => {
  const page = await openApp();
  const before = await app.call<ProjectInfo>('project');
  const bad = ['stop_id,lat,lon,parcels', 'A1,48.1,10.7,2', 'A2,north,10.8,1', 'A3,48.2,10.9,1', 'A4,95.5,10.9,1', 'A5,48.3,10.6,-3', ''].join('\n');
  const file = writeTemp('e2e-bad.csv', bad);
  await page.setInputFiles('#import-file', file);
  const rejected = page.locator('#import-report [data-import=rejected]');
  await expect(rejected).toBeVisible();
  await expect(rejected).toContainText('Nothing was imported');
  const rows = page.locator('#import-report tbody tr');
  expect(await rows.count()).toBeGreaterThanOrEqual(2);
  const rowCells = (await page.locator('#import-report tbody td:first-child').allTextContents()).join(' ');
  // The file's lines 3 and 5 (A2's "north", A4's latitude 95.5); the row numbers are those of the file.
  expect(rowCells).toMatch(/row 3/);
  expect(rowCells).toMatch(/row 5/);
  const after = await app.call<ProjectInfo>('project');
  expect(after.stopSets.length).toBe(before.stopSets.length);
  await shot(page, '02-import-bad');
  expect(errors).toEqual([]);
});

test('a balanced run shows progress to the end and opens the new plan, equal to the Api', async ({ openApp, app, errors }) => {
  const page = await openApp();
  const project = await app.call<ProjectInfo>('project');
  const set = project.stopSets.find((x) => x.stops === 800)!;
  await page.selectOption('#run-stopset', String(set.id));
  await page.fill('#run-zones', '6');
  await page.fill('#run-balance', '10');
  await page.fill('#run-seed', '3');
  await page.fill('#run-name', 'e2e balanced');
  // Record every state the progress bar goes through.
  await page.locator('#run-progress').evaluate((el: any) => {
    const seen: string[] = [];
    el.dataset['seen'] = '';
    new (globalThis as any).MutationObserver(() => {
      const s: string = el.dataset['runState'] ?? '';
      if (seen[seen.length - 1] !== s) seen.push(s);
      el.setAttribute('data-seen', seen.join(' '));
    }).observe(el, { attributes: true, attributeFilter: ['data-run-state'] });
  });
  await page.click('#run-start');
  expect(await waitRunEnd(page)).toBe('done');
  await expect(page.locator('#run-progress')).toHaveAttribute('aria-valuenow', '100');
  expect(await page.locator('#run-progress').getAttribute('data-seen')).toMatch(/^running.* done$/);
  await expect(page.locator('body')).toHaveAttribute('data-plan-name', 'e2e balanced');
  await expect(page.locator('#zone-table tbody tr')).toHaveCount(6);
  const view = await app.call<PlanView>('plan', 'e2e balanced');
  expect(view.zones.length).toBe(6);
  expect(view.info.stopSetId).toBe(set.id);
  for (const z of view.zones) {
    const row = page.locator(`#zone-table tbody tr[data-zone="${z.zone}"]`);
    expect(num(await row.locator('td[data-col=stops]').textContent())).toBe(z.stops);
    expect(num(await row.locator('td[data-col=demand]').textContent())).toBeCloseTo(z.demand, 0);
  }
  // A 10% balance band: every zone's demand within it of the mean (or flagged in the table).
  const mean = view.zones.reduce((a, z) => a + z.demand, 0) / view.zones.length;
  for (const z of view.zones) {
    if (!z.breaksLimits) expect(Math.abs(z.demand - mean) / mean).toBeLessThanOrEqual(0.1 + 1e-6);
  }
  await expect(page.locator('#plan-list li')).toHaveCount((await app.call<ProjectInfo>('project')).plans.length);
  await shot(page, '02-balanced-plan');
  expect(errors).toEqual([]);
});

test('a fixed depots file chosen in the plan panel pins the first zone at the depot', async ({ openApp, app, errors }) => {
  const page = await openApp();
  const project = await app.call<ProjectInfo>('project');
  const set = project.stopSets.find((x) => x.stops === 800)!;
  const [w, s, e, n] = set.bbox;
  const lon = +((w + e) / 2).toFixed(6);
  const lat = +((s + n) / 2).toFixed(6);
  await page.selectOption('#run-stopset', String(set.id));
  await page.fill('#run-zones', '4');
  await page.fill('#run-balance', '');
  await page.fill('#run-name', 'e2e depot');
  // The depot's name carries markup: the map shows it as text.
  const hub = 'Central <b>hub</b> & yard';
  await page.setInputFiles('#run-depots', writeTemp('e2e-depots.csv', `id,lat,lon\n${hub},${lat},${lon}\n`));
  await expect(page.locator('#run-depots-clear')).toBeEnabled();
  await page.click('#run-start');
  expect(await waitRunEnd(page)).toBe('done');
  const view = await app.call<PlanView>('plan', 'e2e depot');
  expect(view.zones[0]!.fixed).toBe(true);
  expect(view.zones[0]!.centre[0]).toBeCloseTo(lon, 6);
  expect(view.zones[0]!.centre[1]).toBeCloseTo(lat, 6);
  expect(view.zones.slice(1).every((z) => !z.fixed)).toBe(true);
  expect(view.zones[0]!.name).toBe(hub);
  const label = page.locator('.zp-centre-label', { hasText: 'Central' });
  await expect(label).toContainText(`${hub}:`);
  await expect(label.locator('b')).toHaveCount(0);
  await page.click('#run-depots-clear');
  await expect(page.locator('#run-depots-clear')).toBeDisabled();
  expect(errors).toEqual([]);
});
