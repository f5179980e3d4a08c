/** Plan versions (list, rename, compare with changed stops on the map) and exports (GeoJSON validated, CSV, PNG). */
import { readFileSync } from 'node:fs';
import * as GJV from 'geojson-validation';
import type { ImportOutcome, PlanView, ProjectInfo, RunStatus, SweepStatus } from '../../src/api/app-types.js';
import type { PlanComparison, SweepRow } from '../../src/api/types.js';
import { expect, openPlanNamed, shot, test, type AppServer } from './fixtures.js';

const DEMO = 'demo: 12 zones';

/** A number as the window writes it (renderer/format.ts fmt). */
const fmt = (n: number, digits = 0): string =>
  Number.isFinite(n) ? n.toLocaleString('en-GB', { maximumFractionDigits: digits, minimumFractionDigits: digits }) : n === Infinity ? '∞' : '–';
const OTHER = 'e2e demo 9 zones';

async function ensureOtherPlan(app: AppServer): Promise<void> {
  const p = await app.call<ProjectInfo>('project');
  if (p.plans.some((x) => x.name === OTHER)) return;
  const demo = p.plans.find((x) => x.name === DEMO)!;
  let r = await app.call<RunStatus>('startRun', demo.stopSetId, { zones: 9, seed: 2 }, OTHER);
  for (let i = 0; i < 300 && r.state === 'running'; i++) {
    await new Promise((res) => setTimeout(res, 100));
    r = await app.call<RunStatus>('runStatus', r.id);
  }
  expect(r.state).toBe('done');
}

test('two plans compare: changed stops marked on the map, workload before and after', async ({ openApp, app, errors }) => {
  await ensureOtherPlan(app);
  const page = await openApp();
  await openPlanNamed(page, DEMO);
  await expect(page.locator('#plan-list li')).toHaveCount((await app.call<ProjectInfo>('project')).plans.length);
  await page.selectOption('#compare-a', DEMO);
  await page.selectOption('#compare-b', OTHER);
  await page.click('#compare-form button[type=submit]');
  const api = await app.call<PlanComparison>('compare', DEMO, OTHER);
  expect(api.changedStops).toBeGreaterThan(0);
  const summary = page.locator('#compare-result p[data-changed]');
  await expect(summary).toHaveAttribute('data-changed', String(api.changedStops));
  await expect(page.locator('#compare-result tbody tr')).toHaveCount(api.zones.length);
  // Every changed stop is marked (the plan shown is the first of the two: all its stops are in both).
  await expect(page.locator('#map')).toHaveAttribute('data-highlighted', String(api.changedStops));
  await page.locator('#p-versions').scrollIntoViewIfNeeded();
  await shot(page, '04-compare');
  await page.click('#compare-clear');
  await expect(page.locator('#compare-result')).toBeEmpty();
  expect(errors).toEqual([]);
});

test('the open plan can be renamed', async ({ openApp, app, errors }) => {
  await ensureOtherPlan(app);
  const page = await openApp();
  await openPlanNamed(page, OTHER);
  await page.fill('#rename-to', `${OTHER} (renamed)`);
  await page.click('#rename-form button');
  await expect(page.locator('body')).toHaveAttribute('data-plan-name', `${OTHER} (renamed)`);
  await expect(page.locator(`#plan-list button[data-plan="${OTHER} (renamed)"]`)).toBeVisible();
  expect((await app.call<ProjectInfo>('project')).plans.map((p) => p.name)).toContain(`${OTHER} (renamed)`);
  await page.fill('#rename-to', OTHER);
  await page.click('#rename-form button');
  await expect(page.locator('body')).toHaveAttribute('data-plan-name', OTHER);
  expect(errors).toEqual([]);
});

test('exports: plan and zones GeoJSON are valid, assignments CSV and a map PNG download', async ({ openApp, app, errors }) => {
  const page = await openApp();
  await openPlanNamed(page, DEMO);
  const view = await app.call<PlanView>('plan', DEMO);
  await page.locator('#p-export summary').click();
  const save = async (selector: string): Promise<{ name: string; text: Buffer }> => {
    const [dl] = await Promise.all([page.waitForEvent('download'), page.click(selector)]);
    const file = await dl.path();
    return { name: dl.suggestedFilename(), text: readFileSync(file) };
  };

  const plan = await save('[data-export=plan]');
  expect(plan.name).toMatch(/\.geojson$/);
  const gj = JSON.parse(plan.text.toString('utf8')) as { type: string; features: { geometry: { type: string } | null }[] };
  expect(GJV.valid(gj, true)).toEqual([]);
  expect(gj.type).toBe('FeatureCollection');
  const types = new Set(gj.features.map((f) => f.geometry?.type));
  expect(types.has('Point')).toBe(true);
  expect([...types].some((t) => t === 'Polygon' || t === 'MultiPolygon')).toBe(true);

  const zones = await save('[data-export=zones]');
  const zj = JSON.parse(zones.text.toString('utf8')) as { features: unknown[] };
  expect(GJV.valid(zj, true)).toEqual([]);
  expect(zj.features.length).toBe(view.zones.length);

  const stops = await save('[data-export=stops]');
  const sj = JSON.parse(stops.text.toString('utf8')) as { features: unknown[] };
  expect(GJV.valid(sj, true)).toEqual([]);
  expect(sj.features.length).toBe(view.info.stops);

  const csv = await save('[data-export=assignments]');
  const lines = csv.text.toString('utf8').trim().split(/\r?\n/);
  expect(lines.length).toBe(view.info.stops + 1);

  const png = await save('#export-png');
  expect(png.name).toMatch(/\.png$/);
  expect(png.text.subarray(0, 8).toString('hex')).toBe('89504e470d0a1a0a');
  expect(png.text.length).toBeGreaterThan(10_000);
  await expect(page.locator('#export-message')).toContainText('PNG');
  expect(errors).toEqual([]);
});

test('a sweep over K draws objective and workload spread against K, its progress filling row by row', async ({ openApp, app, errors }) => {
  const page = await openApp();
  await openPlanNamed(page, DEMO);
  await page.locator('#p-charts summary').click();
  await expect(page.locator('#chart-workload svg rect')).toHaveCount(12);
  await expect(page.locator('#sweep-progress')).toHaveAttribute('data-run-state', 'idle');
  await page.fill('#sweep-from', '3');
  await page.fill('#sweep-to', '6');
  // What the window asked for, to ask the Api the same.
  const started = page.waitForRequest((r) => r.url().endsWith('/api/call/startSweep'));
  await page.click('#sweep-run');
  const args = ((await started).postDataJSON() as { args: unknown[] }).args;
  expect(args.slice(0, 3)).toEqual([expect.any(Number), 3, 6]);
  const progress = page.locator('#sweep-progress');
  await expect(progress).toHaveAttribute('data-run-state', 'done');
  await expect(progress).toHaveAttribute('aria-valuenow', '100');
  await expect(progress).toHaveAttribute('data-rows', '4');
  await expect(page.locator('#sweep-cancel')).toBeDisabled();
  await expect(page.locator('#sweep-run')).toBeEnabled();
  await expect(page.locator('#chart-sweep svg polyline')).toHaveCount(2);
  await expect(page.locator('#chart-sweep tbody tr')).toHaveCount(4);
  const ks = await page.locator('#chart-sweep tbody tr td:first-child').allTextContents();
  expect(ks).toEqual(['3', '4', '5', '6']);
  // The rows shown are the rows the Api gives for the same sweep.
  const rows = await app.call<SweepRow[]>('sweep', ...args);
  const cells = await page.locator('#chart-sweep tbody td').allTextContents();
  expect(cells).toEqual(rows.flatMap((r) => [String(r.zones), fmt(r.objectiveKm2), fmt(r.demandCv, 3), r.note ?? fmt(r.maxKm, 1)]));
  await page.locator('#p-charts').scrollIntoViewIfNeeded();
  await shot(page, '04-charts');
  expect(errors).toEqual([]);
});

test('a wide sweep is cancelled from the keyboard and keeps the rows done', async ({ openApp, app, errors }) => {
  const page = await openApp();
  await openPlanNamed(page, DEMO);
  await page.locator('#p-charts summary').click();
  await page.fill('#sweep-from', '2');
  await page.fill('#sweep-to', '100');
  const started = page.waitForResponse((r) => r.url().endsWith('/api/call/startSweep'));
  await page.click('#sweep-run');
  const { id } = ((await (await started).json()) as { value: SweepStatus }).value;
  const progress = page.locator('#sweep-progress');
  await expect(progress).toHaveAttribute('data-run-state', 'running');
  const cancel = page.locator('#sweep-cancel');
  await expect(cancel).toBeEnabled();
  await expect(page.locator('#sweep-run')).toBeDisabled();
  await cancel.focus();
  await page.keyboard.press('Enter');
  await expect(progress).toHaveAttribute('data-run-state', 'cancelled', { timeout: 5000 });
  await expect(page.locator('#sweep-message')).toContainText('cancelled');
  await expect(cancel).toBeDisabled();
  await expect(page.locator('#sweep-run')).toBeEnabled();
  const s = await app.call<SweepStatus>('sweepStatus', id);
  expect(s.state).toBe('cancelled');
  expect(s.rows.length).toBeLessThan(99);
  await expect(progress).toHaveAttribute('data-rows', String(s.rows.length));
  await expect(page.locator('#chart-sweep tbody tr')).toHaveCount(s.rows.length);
  if (s.rows.length > 0) expect(await page.locator('#chart-sweep tbody tr td:first-child').allTextContents()).toEqual(s.rows.map((r) => String(r.zones)));
  expect(errors).toEqual([]);
});

test('the open plan is rebalanced onto changed demand within a budget', async ({ openApp, app, errors }) => {
  // The demo stops with changed demand on every 20th row and a few new stops.
  const lines = readFileSync('demo-data/tallowmere-stops.csv', 'utf8').trim().split(/\r?\n/);
  const header = lines[0]!.split(',');
  const col = header.indexOf('parcels');
  const changed = lines.map((l, i) => {
    if (i === 0 || i % 20 !== 0) return l;
    const f = l.split(',');
    f[col] = String(Number(f[col]) + 3);
    return f.join(',');
  });
  const first = lines[1]!.split(',');
  for (let i = 0; i < 5; i++) {
    const f = [...first];
    f[0] = `NEW-${i}`;
    changed.push(f.join(','));
  }
  const imported = await app.call<ImportOutcome>('importStops', { name: 'demo-week-2.csv', text: `${changed.join('\n')}\n` }, { demand: 'parcels' });
  expect(imported.ok).toBe(true);
  if (!imported.ok) return;
  const page = await openApp();
  await openPlanNamed(page, DEMO);
  await page.selectOption('#rebalance-set', String(imported.stopSet.id));
  await page.fill('#rebalance-budget', '60');
  await page.fill('#rebalance-name', 'e2e week 2');
  await page.click('#rebalance-form button[type=submit]');
  // The progress bar runs to the end, then the new plan opens with its report.
  await expect(page.locator('#rebalance-progress')).toHaveAttribute('data-run-state', 'done', { timeout: 30_000 });
  await expect(page.locator('#rebalance-progress')).toHaveAttribute('aria-valuenow', '100');
  await expect(page.locator('body')).toHaveAttribute('data-plan-name', 'e2e week 2', { timeout: 30_000 });
  await expect(page.locator('#rebalance-result')).toContainText('5 new stops');
  await expect(page.locator('#rebalance-cancel')).toBeDisabled();
  const p = await app.call<ProjectInfo>('project');
  const plan = p.plans.find((x) => x.name === 'e2e week 2')!;
  expect(plan.parent).toBe(DEMO);
  expect(plan.stopSetId).toBe(imported.stopSet.id);
  expect(errors).toEqual([]);
});
