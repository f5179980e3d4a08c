/**
 * 100k stops: a long run is cancelled (state 'cancelled', saved plans unchanged), then a plan of
 * them is drawn and the first draw is timed. The figure is recorded (annotation, stdout and
 * test-results/draw-100k.json); the hard 2 s target is checked by test/e2e/draw-bench.mjs, not
 * here (timings in tests are flaky on shared machines). Then a stop on a zone border is moved in
 * the window: the polygons, redrawn on the main side, reach the map without a reload. Last, a
 * rebalance of a balanced plan runs in the background (the server answers meanwhile) and is
 * cancelled from the keyboard with nothing saved.
 */
import { mkdirSync, writeFileSync } from 'node:fs';
import { booleanPointInPolygon } from '@turf/turf';
import { Delaunay } from 'd3-delaunay';
import type { Feature, FeatureCollection, MultiPolygon, Polygon } from 'geojson';
import type { ExportResult, ImportOutcome, PlanView, ProjectInfo, RunStatus } from '../../src/api/app-types.js';
import { expect, openPlanNamed, shot, stopsCsv, test, waitRunEnd } from './fixtures.js';

const N = 100_000;
const PLAN = 'e2e 100k stops';

test.describe.configure({ mode: 'serial' });

let stopSetId = 0;

test('a long run is cancelled and the saved plans stay as they were', async ({ openApp, app, errors }) => {
  test.setTimeout(90_000);
  const imported = await app.call<ImportOutcome>('importStops', { name: 'e2e-100k.csv', text: stopsCsv(N, 5) });
  expect(imported.ok).toBe(true);
  if (!imported.ok) return;
  stopSetId = imported.stopSet.id;
  const before = await app.call<ProjectInfo>('project');

  const page = await openApp();
  const listCount = await page.locator('#plan-list').getAttribute('data-count');
  await page.selectOption('#run-stopset', String(stopSetId));
  await page.fill('#run-zones', '40');
  await page.fill('#run-balance', '5');
  await page.fill('#run-name', 'e2e cancelled run');
  await page.click('#run-start');
  await expect(page.locator('#run-progress')).toHaveAttribute('data-run-state', 'running');
  await expect(page.locator('#run-cancel')).toBeEnabled();
  await page.click('#run-cancel');
  expect(await waitRunEnd(page, 20_000)).toBe('cancelled');
  await expect(page.locator('#run-message')).toContainText('cancelled');
  await shot(page, '05-run-cancelled');
  const after = await app.call<ProjectInfo>('project');
  expect(after.plans.map((p) => `${p.name}|${p.createdAt}|${p.edits}`)).toEqual(before.plans.map((p) => `${p.name}|${p.createdAt}|${p.edits}`));
  await expect(page.locator('#plan-list')).toHaveAttribute('data-count', listCount ?? '');
  expect(errors).toEqual([]);
});

test('100k stops: first draw timed', async ({ page, app, errors }) => {
  test.setTimeout(120_000);
  expect(stopSetId).toBeGreaterThan(0);
  let r = await app.call<RunStatus>('startRun', stopSetId, { zones: 20, seed: 1 }, PLAN);
  for (let i = 0; i < 900 && r.state === 'running'; i++) {
    await new Promise((res) => setTimeout(res, 100));
    r = await app.call<RunStatus>('runStatus', r.id);
  }
  expect(r.state).toBe('done');
  // Warm the server's copy of the plan once (the first read of a new plan builds it).
  await app.call('plan', PLAN);

  // The newest plan opens first: the time from navigation to the window's ready flag.
  const t0 = Date.now();
  await page.goto(app.url);
  await page.waitForSelector('body[data-ready="1"]', { timeout: 30_000 });
  const firstDrawMs = Date.now() - t0;
  await expect(page.locator('body')).toHaveAttribute('data-plan-name', PLAN);
  await expect(page.locator('#map')).toHaveAttribute('data-stop-count', String(N));
  const map = page.locator('#map');
  const figures = {
    stops: N,
    firstDrawMs,
    fetchMs: Number(await map.getAttribute('data-fetch-ms')),
    renderMs: Number(await map.getAttribute('data-render-ms')),
    stopsCanvasMs: Number(await map.getAttribute('data-draw-ms')),
  };
  // Pan redraw, for the record.
  const redrawMs = await page.evaluate(async () => {
    const t = performance.now();
    const g = globalThis as any; // in the page
    g.dispatchEvent(new g.Event('resize'));
    await new Promise((res) => g.requestAnimationFrame(() => g.requestAnimationFrame(res)));
    return Math.round(performance.now() - t);
  });
  const record = { ...figures, resizeRedrawMs: redrawMs };
  console.log(`[draw] 100k stops: first draw ${firstDrawMs} ms (fetch ${figures.fetchMs} ms, render ${figures.renderMs} ms, stops canvas ${figures.stopsCanvasMs} ms)`);
  test.info().annotations.push({ type: 'first-draw-ms', description: String(firstDrawMs) });
  mkdirSync('test-results', { recursive: true });
  writeFileSync('test-results/draw-100k.json', `${JSON.stringify(record, null, 2)}\n`);
  await shot(page, '05-100k-stops');
  expect(errors).toEqual([]);
});

type Zones = FeatureCollection<Polygon | MultiPolygon, { zone: number }>;

/** The zones whose polygons hold a point (turf as the outside reference). */
function zonesHolding(view: PlanView, lon: number, lat: number): number[] {
  return (view.boundaries as Zones).features.filter((f: Feature<Polygon | MultiPolygon, { zone: number }>) => booleanPointInPolygon([lon, lat], f)).map((f) => f.properties.zone);
}

test('100k stops: the map redraws the zone polygons after a stop is moved across a border', async ({ openApp, app, errors }) => {
  test.setTimeout(120_000);
  // The stops as imported, and the zone of each (the assignments CSV of the plan).
  const rows = stopsCsv(N, 5).trim().split('\n').slice(1).map((l) => l.split(','));
  const lon = rows.map((r) => Number(r[2]));
  const lat = rows.map((r) => Number(r[1]));
  const csv = await app.call<ExportResult>('exportPlan', { plan: PLAN, kind: 'assignments', file: null });
  const zoneOf = new Map(csv.content!.trim().split('\n').slice(1).map((l) => l.split(',')).map((r) => [r[0]!, Number(r[1])] as const));
  const zone = rows.map((r) => zoneOf.get(r[0]!)!);
  const before = await app.call<PlanView>('plan', PLAN);
  expect(before.boundariesPending).toBe(false);
  // A stop whose nearest stop lies in another zone (their cells touch), inside its own zone's polygon.
  const k = Math.cos((48.2 * Math.PI) / 180);
  const d = Delaunay.from(rows.map((_, i) => [lon[i]! * k, lat[i]!] as [number, number]));
  let pick: { index: number; to: number } | null = null;
  for (let i = 0; i < N && !pick; i++) {
    let best = -1;
    let bestD = Infinity;
    for (const j of d.neighbors(i)) {
      const dd = ((lon[i]! - lon[j]!) * k) ** 2 + (lat[i]! - lat[j]!) ** 2;
      if (dd < bestD) [best, bestD] = [j, dd];
    }
    if (best >= 0 && zone[best] !== zone[i] && zonesHolding(before, lon[i]!, lat[i]!).join() === String(zone[i])) pick = { index: i, to: zone[best]! };
  }
  expect(pick).not.toBeNull();
  const { index, to } = pick!;
  const id = rows[index]![0]!;

  const page = await openApp();
  await expect(page.locator('body')).toHaveAttribute('data-plan-name', PLAN);
  const map = page.locator('#map');
  await expect(map).toHaveAttribute('data-boundaries-version', String(before.boundariesVersion));
  await page.locator('#p-stop summary').click();
  await page.fill('#stop-query', id);
  await page.press('#stop-query', 'Enter');
  await expect(page.locator('#stop-details dl')).toHaveAttribute('data-stop-zone', String(zone[index]));
  await page.selectOption('#stop-zone', String(to));
  await page.click('#stop-move');
  await expect(page.locator('#stop-details dl')).toHaveAttribute('data-stop-zone', String(to));
  // The edit answered with the old polygons; the map fetches the new ones when they are drawn.
  const edited = await app.call<PlanView>('plan', PLAN);
  expect(edited.version).toBeGreaterThan(before.version);
  await expect(map).toHaveAttribute('data-boundaries-version', String(edited.version), { timeout: 60_000 });
  await expect(map).toHaveAttribute('data-boundaries-pending', '0');
  await expect(map).toHaveAttribute('data-boundaries-zones', String(before.zones.length));
  const now = await app.call<PlanView>('plan', PLAN);
  expect(now.boundariesPending).toBe(false);
  expect(now.boundariesVersion).toBe(edited.version);
  expect(zonesHolding(now, lon[index]!, lat[index]!)).toEqual([to]);
  await shot(page, '05-100k-polygons-after-edit');
  // Undo: the polygons follow back.
  await page.click('#undo');
  await expect(page.locator('#stop-details dl')).toHaveAttribute('data-stop-zone', String(zone[index]));
  const undone = await app.call<PlanView>('plan', PLAN);
  await expect(map).toHaveAttribute('data-boundaries-version', String(undone.version), { timeout: 60_000 });
  expect(zonesHolding(await app.call<PlanView>('plan', PLAN), lon[index]!, lat[index]!)).toEqual([zone[index]]);
  expect(errors).toEqual([]);
});

test('100k stops: a rebalance runs in the background with its progress bar and is cancelled', async ({ openApp, app, errors }) => {
  test.setTimeout(120_000);
  // The same stops with every tenth one's parcels tripled.
  const lines = stopsCsv(N, 5).trim().split('\n');
  const changed = lines.map((l, i) => (i > 0 && i % 10 === 0 ? l.replace(/,(\d+)$/, (_m, d: string) => `,${Number(d) * 3}`) : l));
  const imported = await app.call<ImportOutcome>('importStops', { name: 'e2e-100k-week-2.csv', text: `${changed.join('\n')}\n` });
  expect(imported.ok).toBe(true);
  if (!imported.ok) return;
  // A balanced plan: with the new demand its zones must trade stops, and a budget of one move
  // makes the rebalance search the price of a move (dozens of assignments of 100k stops).
  const BALANCED = 'e2e 100k balanced';
  let r = await app.call<RunStatus>('startRun', stopSetId, { zones: 40, balance: 0.05, seed: 1 }, BALANCED);
  for (let i = 0; i < 1200 && r.state === 'running'; i++) {
    await new Promise((res) => setTimeout(res, 100));
    r = await app.call<RunStatus>('runStatus', r.id);
  }
  expect(r.state).toBe('done');
  const before = await app.call<ProjectInfo>('project');

  const page = await openApp();
  await openPlanNamed(page, BALANCED);
  await expect(page.locator('body')).toHaveAttribute('data-plan-name', BALANCED);
  await page.selectOption('#rebalance-set', String(imported.stopSet.id));
  await page.fill('#rebalance-budget', '1');
  await page.fill('#rebalance-name', 'e2e 100k rebalance cancelled');
  const bar = page.locator('#rebalance-progress');
  await page.click('#rebalance-run');
  await expect(bar).toHaveAttribute('data-run-state', 'running');
  await expect(page.locator('#rebalance-run')).toBeDisabled();
  // The server answers while the rebalance is under way (it runs in a worker thread).
  const t0 = Date.now();
  await app.call<ProjectInfo>('project');
  const answerMs = Date.now() - t0;
  test.info().annotations.push({ type: 'answer-during-rebalance-ms', description: String(answerMs) });
  expect(answerMs).toBeLessThan(5000);
  await shot(page, '05-100k-rebalance-running');
  // Cancel from the keyboard.
  const cancel = page.locator('#rebalance-cancel');
  await expect(cancel).toBeEnabled();
  await cancel.focus();
  await page.keyboard.press('Enter');
  await expect(bar).toHaveAttribute('data-run-state', 'cancelled', { timeout: 5000 });
  await expect(page.locator('#rebalance-message')).toContainText('the saved plans are unchanged');
  await expect(cancel).toBeDisabled();
  await expect(page.locator('#rebalance-run')).toBeEnabled();
  const after = await app.call<ProjectInfo>('project');
  expect(after.plans.map((p) => `${p.name}|${p.createdAt}|${p.edits}`)).toEqual(before.plans.map((p) => `${p.name}|${p.createdAt}|${p.edits}`));
  expect(errors).toEqual([]);
});
