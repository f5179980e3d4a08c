/**
 * The map window: wires the Api (window.zoneplan in the desktop app, HTTP in browser mode) to the
 * map and the panels. Every edit, undo and redo redraws the zone table, charts and map from the
 * PlanView the main side returns, so the window never computes figures of its own (except the
 * 90th-percentile spread ring, from the stop arrays).
 *
 * Test hooks are data attributes only: body[data-ready="1"] once the first plan is drawn,
 * #run-progress[data-run-state], #sweep-progress[data-run-state|data-rows], #rebalance-progress[data-run-state], body[data-plan-name], #map[data-stop-count], #map[data-draw-ms],
 * #centre-edit[data-zone|data-lon|data-lat|data-step-m|data-fixed] while a centre is moved by keyboard.
 */
import 'leaflet/dist/leaflet.css';
import './style.css';
import type { Api, MapSettings, PlanArrays, PlanView, ProjectInfo, RebalanceStatus, RunSettings, RunStatus, StopDetails, SweepStatus } from '../src/api/app-types.js';
import type { InputProblem, PlanComparison, SweepRow, ZoneRow } from '../src/api/types.js';
import type { AppEvents } from '../src/desktop/channels.js';
import { isTileUrl } from '../src/api/tile-url.js';
import { createHttpApi, errorMessage } from './api-client.js';
import { CentreEditor } from './centre-edit.js';
import { MapView } from './map-view.js';
import { sweepChart, workloadChart } from './charts.js';
import { download, fmt, fmtKm, h, pct } from './format.js';
import { assignZoneColours, zoneColour } from './palette.js';
import type { StopsData } from './stops-layer.js';

const $ = <T extends HTMLElement = HTMLElement>(id: string): T => {
  const el = document.getElementById(id);
  if (!el) throw new Error(`missing #${id}`);
  return el as T;
};

function pickApi(): Api {
  const desktop = (window as unknown as { zoneplan?: Api }).zoneplan;
  if (desktop) return desktop;
  const token = new URLSearchParams(location.search).get('token') ?? '';
  return createHttpApi(token);
}

const api = pickApi();

interface State {
  project: ProjectInfo | null;
  plan: string | null;
  view: PlanView | null;
  arrays: StopsData | null;
  demand: Float32Array | null;
  ids: readonly string[] | null;
  selected: StopDetails | null;
  run: RunStatus | null;
  sort: { key: SortKey; dir: 1 | -1 };
  comparison: { a: string; b: string; result: PlanComparison } | null;
}
type SortKey = 'zone' | 'stops' | 'demand' | 'utilisation' | 'meanKm' | 'maxKm' | 'p90';

const state: State = { project: null, plan: null, view: null, arrays: null, demand: null, ids: null, selected: null, run: null, sort: { key: 'zone', dir: 1 }, comparison: null };
let spread = new Map<number, number>();

// ---------------------------------------------------------------------------------------------
// Status line

function status(msg: string, error = false): void {
  const el = $('status');
  el.textContent = msg;
  el.classList.toggle('zp-error', error);
  el.title = msg;
}

async function guard<T>(what: string, f: () => Promise<T>): Promise<T | undefined> {
  try {
    return await f();
  } catch (e) {
    status(`${what}: ${errorMessage(e)}`, true);
    return undefined;
  }
}

// ---------------------------------------------------------------------------------------------
// Map

const mapView = new MapView($('map'), {
  onStopClick: (i) => void selectStop(i),
  onCentreDrop: (zone, lon, lat) => void applyEdit({ kind: 'pin-centre', zone, lon, lat }, `Zone ${zone} centre pinned`),
  onCentreSelect: (zone) => centreEditor.start(zone),
});

/** Zone label of each array zone index (the zone rows are in index order). */
function labelsOf(view: PlanView): Int16Array {
  const map = new Int16Array(Math.max(1, view.zones.length));
  view.zones.forEach((z, j) => (map[j] = z.zone));
  return map;
}

function stopsData(a: PlanArrays, view: PlanView): { data: StopsData; demand: Float32Array } {
  const lonLat = new Float32Array(a.buffer, a.lonLatOffset, 2 * a.count);
  const zone = new Int16Array(a.buffer, a.zoneOffset, a.count);
  const demand = new Float32Array(a.buffer, a.demandOffset, a.count);
  const locked = new Uint8Array(a.buffer, a.lockedOffset, a.count);
  const labels = labelsOf(view);
  const label = new Int16Array(a.count);
  for (let i = 0; i < a.count; i++) {
    const z = zone[i]!;
    label[i] = z >= 0 && z < labels.length ? labels[z]! : 0;
  }
  return { data: { count: a.count, lonLat, label, locked }, demand };
}

/** The 90th-percentile great-circle distance (km) of each zone's stops to its centre. */
function spreadKm(d: StopsData, zones: readonly ZoneRow[]): Map<number, number> {
  const R = 6371.0088;
  const rad = Math.PI / 180;
  const byZone = new Map<number, number[]>();
  const centre = new Map<number, [number, number]>();
  for (const z of zones) {
    byZone.set(z.zone, []);
    centre.set(z.zone, z.centre);
  }
  for (let i = 0; i < d.count; i++) {
    const c = centre.get(d.label[i]!);
    if (!c) continue;
    const lon = d.lonLat[2 * i]! * rad, lat = d.lonLat[2 * i + 1]! * rad;
    const lon0 = c[0] * rad, lat0 = c[1] * rad;
    const s1 = Math.sin((lat - lat0) / 2), s2 = Math.sin((lon - lon0) / 2);
    const a = s1 * s1 + Math.cos(lat) * Math.cos(lat0) * s2 * s2;
    byZone.get(d.label[i]!)!.push(2 * R * Math.atan2(Math.sqrt(a), Math.sqrt(Math.max(0, 1 - a))));
  }
  const out = new Map<number, number>();
  for (const [z, ds] of byZone) {
    if (ds.length === 0) continue;
    ds.sort((x, y) => x - y);
    out.set(z, ds[Math.min(ds.length - 1, Math.floor(0.9 * (ds.length - 1)))]!);
  }
  return out;
}

function capacityOf(view: PlanView): number | null {
  const caps = view.zones.map((z) => z.maxDemand).filter((x): x is number => x !== null);
  return caps.length ? Math.max(...caps) : null;
}

/** Redraws everything that depends on the plan view (and the arrays when given). */
function render(view: PlanView, arrays?: PlanArrays): void {
  state.view = view;
  assignZoneColours(view.zones);
  if (arrays) {
    const { data, demand } = stopsData(arrays, view);
    state.arrays = data;
    state.demand = demand;
    const t0 = performance.now();
    mapView.setStops(data);
    $('map').dataset['drawMs'] = String(Math.round(performance.now() - t0));
    $('map').dataset['stopCount'] = String(data.count);
  }
  if (state.arrays) spread = spreadKm(state.arrays, view.zones);
  mapView.setBoundaries(view.boundaries);
  mapView.setZones(view.zones, spread, capacityOf(view));
  renderZoneTable();
  centreEditor.sync();
  renderWorkloadChart();
  renderHistoryButtons();
  renderStopZoneOptions();
  const title = `${view.info.name} · ${view.info.zones} zones · ${fmt(view.info.stops)} stops${view.info.edits ? ` · ${view.info.edits} edits` : ''}`;
  $('plan-title').textContent = title;
  document.body.dataset['planName'] = view.info.name;
  $('distance-note').textContent = view.distanceNote || $('distance-note').textContent;
}

async function openPlan(name: string, fit = true): Promise<void> {
  status(`Opening ${name}…`);
  const t0 = performance.now();
  const got = await guard(`Opening ${name}`, () => Promise.all([api.plan(name), api.planArrays(name)]));
  if (!got) return;
  centreEditor.end();
  const t1 = performance.now();
  const [view, arrays] = got;
  state.plan = name;
  state.ids = null;
  state.selected = null;
  state.comparison = null;
  mapView.stops.setHighlighted(null);
  mapView.stops.setSelected(null);
  renderStopDetails();
  $('compare-result').textContent = '';
  render(view, arrays);
  if (fit) mapView.fitStops();
  renderPlanList();
  $('map').dataset['fetchMs'] = String(Math.round(t1 - t0));
  $('map').dataset['renderMs'] = String(Math.round(performance.now() - t1));
  status(`${name}: ${view.zones.length} zones, objective ${fmt(view.objectiveKm2)} km²`);
}

/** Refresh after an edit, undo or redo: the view came back; the stop arrays changed with it. */
async function afterEdit(view: PlanView, message: string): Promise<void> {
  const arrays = await guard('Reading the stops', () => api.planArrays(view.info.name));
  render(view, arrays);
  if (state.selected) await selectStop(state.selected.index, false);
  await refreshProject();
  status(message);
}

/** Records an edit and redraws; false when it was refused (the message is in the status line). */
async function applyEdit(edit: Parameters<Api['edit']>[1], message: string): Promise<boolean> {
  if (!state.plan) return false;
  const plan = state.plan;
  const view = await guard('Edit', () => api.edit(plan, edit));
  if (view) await afterEdit(view, message);
  else if (state.view) render(state.view); // put a dragged centre back
  return view !== undefined;
}

async function undoRedo(which: 'undo' | 'redo'): Promise<void> {
  if (!state.plan || !state.view) return;
  if (which === 'undo' ? !state.view.canUndo : !state.view.canRedo) return;
  const plan = state.plan;
  const view = await guard(which === 'undo' ? 'Undo' : 'Redo', () => (which === 'undo' ? api.undo(plan) : api.redo(plan)));
  if (view) await afterEdit(view, which === 'undo' ? 'Undone' : 'Redone');
}

function renderHistoryButtons(): void {
  ($('undo') as HTMLButtonElement).disabled = !state.view?.canUndo;
  ($('redo') as HTMLButtonElement).disabled = !state.view?.canRedo;
}

$('undo').addEventListener('click', () => void undoRedo('undo'));
$('redo').addEventListener('click', () => void undoRedo('redo'));
document.addEventListener('keydown', (e) => {
  if (!(e.ctrlKey || e.metaKey) || e.key.toLowerCase() !== 'z' && e.key.toLowerCase() !== 'y') return;
  const t = e.target as HTMLElement | null;
  if (t && (t.tagName === 'INPUT' || t.tagName === 'TEXTAREA' || t.isContentEditable)) return;
  e.preventDefault();
  // A centre being moved from the keyboard goes back first: undo is of recorded edits.
  if (centreEditor.active) centreEditor.cancel();
  const redo = e.key.toLowerCase() === 'y' || e.shiftKey;
  void undoRedo(redo ? 'redo' : 'undo');
});

// ---------------------------------------------------------------------------------------------
// Zone centres from the keyboard (renderer/centre-edit.ts), and the keyboard help

const centreEditor = new CentreEditor($('centre-edit'), {
  zones: () => (state.view ? sortedZones(state.view) : []),
  metresPerPixel: () => mapView.metresPerPixel(),
  preview: (zone, lon, lat) => {
    mapView.previewCentre(zone, lon, lat);
    for (const tr of Array.from(document.querySelectorAll<HTMLElement>('#zone-table tbody tr'))) tr.classList.toggle('zp-row-active', zone !== null && tr.dataset['zone'] === String(zone));
  },
  pin: (zone, lon, lat) => applyEdit({ kind: 'pin-centre', zone, lon, lat }, `Zone ${zone} centre pinned at ${lat.toFixed(5)}, ${lon.toFixed(5)}`),
  unpin: (zone, at) => applyEdit(at ? { kind: 'unpin-centre', zone, lon: at[0], lat: at[1] } : { kind: 'unpin-centre', zone }, `Zone ${zone} centre unpinned: no longer a fixed depot`),
  status,
  focusAfter: (zone) => document.querySelector<HTMLElement>(`#zone-table tbody tr[data-zone="${zone}"]`),
});

/** The zone C acts on: the focused zone row's, else the selected stop's, else the first in the table. */
function zoneForKey(target: HTMLElement | null): number | null {
  const row = target?.closest<HTMLElement>('#zone-table tbody tr[data-zone]');
  if (row) return Number(row.dataset['zone']);
  if (!state.view) return null;
  if (state.selected && state.view.zones.some((z) => z.zone === state.selected!.zone)) return state.selected.zone;
  return sortedZones(state.view)[0]?.zone ?? null;
}

document.addEventListener('keydown', (e) => {
  if (e.ctrlKey || e.metaKey || e.altKey || e.defaultPrevented) return;
  const t = e.target as HTMLElement | null;
  if (t && (t.tagName === 'INPUT' || t.tagName === 'TEXTAREA' || t.tagName === 'SELECT' || t.isContentEditable)) return;
  if (t && $('centre-edit').contains(t)) return;
  if (e.key === 'c' || e.key === 'C') {
    const zone = zoneForKey(t);
    if (zone === null) return;
    e.preventDefault();
    centreEditor.start(zone);
  } else if (e.key === '?') {
    e.preventDefault();
    const panel = $('p-keys') as HTMLDetailsElement;
    panel.open = true;
    panel.querySelector('summary')?.focus();
  }
});

// ---------------------------------------------------------------------------------------------
// Zone table

const COLUMNS: readonly { key: SortKey; label: string; title: string }[] = [
  { key: 'zone', label: 'Zone', title: 'Zone number' },
  { key: 'stops', label: 'Stops', title: 'Stops in the zone' },
  { key: 'demand', label: 'Demand', title: 'Workload (sum of demand)' },
  { key: 'utilisation', label: 'Use', title: 'Demand as a share of the zone capacity' },
  { key: 'meanKm', label: 'Mean km', title: 'Mean great-circle km to the centre' },
  { key: 'maxKm', label: 'Max km', title: 'Largest great-circle km to the centre' },
  { key: 'p90', label: '90% km', title: '90% of stops are within this great-circle distance' },
];

function sortValue(z: ZoneRow, key: SortKey): number {
  if (key === 'p90') return spread.get(z.zone) ?? 0;
  if (key === 'utilisation') return z.utilisation ?? (capacityOf(state.view!) ? z.demand / capacityOf(state.view!)! : 0);
  return z[key];
}

/** The zones in the order the zone table shows them. */
function sortedZones(view: PlanView): ZoneRow[] {
  return [...view.zones].sort((a, b) => (sortValue(a, state.sort.key) - sortValue(b, state.sort.key)) * state.sort.dir || a.zone - b.zone);
}

function renderZoneTable(): void {
  const view = state.view;
  const table = $('zone-table');
  // A focused zone row keeps the focus when the table is drawn again (after an edit, undo, redo).
  const focusedZone = document.activeElement instanceof HTMLElement ? document.activeElement.closest<HTMLElement>('#zone-table tbody tr[data-zone]')?.dataset['zone'] : undefined;
  const headRow = table.querySelector('thead tr')!;
  headRow.innerHTML = '';
  for (const c of COLUMNS) {
    const active = state.sort.key === c.key;
    const th = h('th', { scope: 'col', 'aria-sort': active ? (state.sort.dir === 1 ? 'ascending' : 'descending') : 'none', 'data-key': c.key });
    const b = h('button', { type: 'button', title: `${c.title}. Sort by ${c.label}.`, text: `${c.label}${active ? (state.sort.dir === 1 ? ' ▲' : ' ▼') : ''}` });
    b.addEventListener('click', () => {
      state.sort = { key: c.key, dir: active ? ((-state.sort.dir) as 1 | -1) : 1 };
      renderZoneTable();
      (table.querySelector(`th[data-key="${c.key}"] button`) as HTMLButtonElement | null)?.focus();
    });
    th.appendChild(b);
    headRow.appendChild(th);
  }
  const body = table.querySelector('tbody')!;
  body.innerHTML = '';
  if (!view) return;
  const cap = capacityOf(view);
  const rows = sortedZones(view);
  for (const z of rows) {
    const over = z.breaksLimits || (cap !== null && z.demand > cap * (1 + 1e-9));
    const u = z.utilisation ?? (cap ? z.demand / cap : null);
    const util = h('span', { class: `zp-util${over ? ' zp-util-over' : ''}`, 'aria-hidden': 'true' }, h('span'));
    (util.firstChild as HTMLElement).style.width = `${Math.min(100, Math.max(0, (u ?? 0) * 100))}%`;
    const sw = h('span', { class: 'zp-swatch' });
    sw.style.background = zoneColour(z.zone);
    const tr = h(
      'tr',
      {
        tabindex: 0,
        'data-zone': z.zone,
        class: [over ? 'zp-over' : '', centreEditor.zone === z.zone ? 'zp-row-active' : ''].join(' ').trim() || null,
        'aria-keyshortcuts': 'Enter C',
        'aria-label': `Zone ${z.zone}${z.name ? ` (${z.name})` : ''}: ${z.stops} stops, demand ${fmt(z.demand)}${u !== null ? `, ${pct(u)} of capacity` : ''}${over ? ', breaks its limits' : ''}${z.fixed ? ', centre pinned' : ''}. Enter zooms to it; C moves its centre with the arrow keys.`,
      },
      h('td', {}, sw, ` ${z.name ?? z.zone}${z.fixed ? ' ⚓' : ''}`),
      h('td', { 'data-col': 'stops', text: fmt(z.stops) }),
      h('td', { 'data-col': 'demand', text: fmt(z.demand, Number.isInteger(z.demand) ? 0 : 1) }),
      h('td', { 'data-col': 'utilisation' }, u !== null ? util : '', ` ${u !== null ? pct(u) : '–'}${over ? ' ⚠' : ''}`),
      h('td', { 'data-col': 'meanKm', text: fmt(z.meanKm, 1) }),
      h('td', { 'data-col': 'maxKm', text: fmt(z.maxKm, 1) }),
      h('td', { 'data-col': 'p90', text: fmt(spread.get(z.zone) ?? null, 1) }),
    );
    const zoom = () => mapView.fitZone(z.zone);
    tr.addEventListener('click', zoom);
    tr.addEventListener('keydown', (e) => {
      if (e.key === 'Enter' || e.key === ' ') {
        e.preventDefault();
        zoom();
      } else if (e.key === 'ArrowDown' || e.key === 'ArrowUp') {
        e.preventDefault();
        ((e.key === 'ArrowDown' ? tr.nextElementSibling : tr.previousElementSibling) as HTMLElement | null)?.focus();
      }
    });
    body.appendChild(tr);
    if (focusedZone === String(z.zone)) tr.focus();
  }
  const over = view.zones.filter((z) => z.breaksLimits).length;
  $('zones-summary').textContent = `Objective ${fmt(view.objectiveKm2)} km² · workload spread (CV) ${fmt(view.demandCv, 3)}${view.maxMinRatio !== null ? ` · largest/smallest ${fmt(view.maxMinRatio, 2)}` : ''}${over ? ` · ${over} zone${over === 1 ? '' : 's'} over limits` : ''}${view.notes.length ? ` · ${view.notes.join('; ')}` : ''}`;
}

// ---------------------------------------------------------------------------------------------
// Charts

function renderWorkloadChart(): void {
  const el = $('chart-workload');
  el.innerHTML = '';
  if (state.view) el.appendChild(workloadChart(state.view.zones, capacityOf(state.view)));
}

/** The sweep shown in the Charts panel (null: none, or the project changed since). */
let sweepRun: SweepStatus | null = null;
/** How many rows the chart and table show now (they are redrawn only when rows arrive). */
let sweepDrawn = -1;

function drawSweepRows(rows: readonly SweepRow[]): void {
  if (rows.length === sweepDrawn) return;
  sweepDrawn = rows.length;
  const el = $('chart-sweep');
  el.innerHTML = '';
  if (rows.length === 0) return;
  el.appendChild(sweepChart(rows));
  el.appendChild(h('p', { class: 'zp-hint', text: 'Solid: objective (sum of demand × km²). Dashed: workload spread (coefficient of variation of zone demand).' }));
  const t = h('table', { class: 'zp-table', 'aria-label': 'Sweep results' }, h('thead', {}, h('tr', {}, ...['K', 'Objective', 'CV', 'Max km'].map((x) => h('th', { scope: 'col', text: x })))));
  const tb = h('tbody');
  for (const r of rows) tb.appendChild(h('tr', {}, h('td', { text: r.zones }), h('td', { text: fmt(r.objectiveKm2) }), h('td', { text: fmt(r.demandCv, 3) }), h('td', { text: r.note ?? fmt(r.maxKm, 1) })));
  t.appendChild(tb);
  el.appendChild(t);
}

/** The sweep's progress bar, message and buttons; its rows in the chart and table. */
function showSweep(s: SweepStatus | null): void {
  const bar = $('sweep-progress');
  const st = s?.state ?? 'idle';
  const f = s ? (s.state === 'done' ? 1 : Math.max(0, Math.min(1, s.fraction))) : 0;
  const total = s ? s.to - s.from + 1 : 0;
  const done = s?.rows.length ?? 0;
  bar.dataset['runState'] = st;
  bar.dataset['rows'] = String(done);
  bar.setAttribute('aria-valuenow', String(Math.round(f * 100)));
  bar.setAttribute('aria-valuetext', s ? `${st}: ${done} of ${total} zone counts, ${Math.round(f * 100)}%` : 'idle');
  $('sweep-bar').style.width = `${f * 100}%`;
  $('sweep-message').textContent = s
    ? `Sweep of K ${s.from}–${s.to}: ${st === 'running' ? `${done} of ${total} done, ${Math.round(f * 100)}%` : st}${s.message ? ` — ${s.message}` : ''}`
    : '';
  ($('sweep-run') as HTMLButtonElement).disabled = st === 'running';
  ($('sweep-cancel') as HTMLButtonElement).disabled = st !== 'running';
  if (s) drawSweepRows(s.rows);
}

async function pollSweep(id: string): Promise<void> {
  for (;;) {
    await new Promise((r) => setTimeout(r, 150));
    if (sweepRun?.id !== id) return; // the project changed: this sweep is no longer shown
    const s = await guard('Sweep status', () => api.sweepStatus(id));
    if (sweepRun?.id !== id) return;
    if (!s) return showSweep({ ...sweepRun, state: 'failed' });
    sweepRun = s;
    showSweep(s);
    if (s.state === 'running') continue;
    if (s.state === 'done') status(`Sweep of K ${s.from}–${s.to} done`);
    else if (s.state === 'cancelled') status(`Sweep of K ${s.from}–${s.to} cancelled; ${s.rows.length} of ${s.to - s.from + 1} zone counts done`);
    else status(`Sweep failed: ${s.message ?? ''}`, true);
    return;
  }
}

$('sweep-form').addEventListener('submit', (e) => {
  e.preventDefault();
  if (sweepRun?.state === 'running') return;
  void (async () => {
    const stopSet = Number(($('run-stopset') as HTMLSelectElement).value || state.view?.info.stopSetId);
    const a = Number(($('sweep-from') as HTMLInputElement).value);
    const b = Number(($('sweep-to') as HTMLInputElement).value);
    const { zones: _z, ...rest } = runSettings();
    void _z;
    const s = await guard('Sweep', () => api.startSweep(stopSet, Math.min(a, b), Math.max(a, b), rest));
    if (!s) return;
    sweepRun = s;
    sweepDrawn = -1;
    showSweep(s);
    status(`Sweeping K ${s.from}–${s.to}…`);
    await pollSweep(s.id);
  })();
});
$('sweep-cancel').addEventListener('click', () => {
  const s = sweepRun;
  if (!s || s.state !== 'running') return;
  void guard('Cancel sweep', () => api.cancelSweep(s.id));
});

// ---------------------------------------------------------------------------------------------
// Selected stop

async function stopIds(): Promise<readonly string[] | null> {
  if (state.ids || !state.plan) return state.ids;
  const plan = state.plan;
  state.ids = (await guard('Reading stop ids', () => api.stopIds(plan))) ?? null;
  return state.ids;
}

async function selectStop(index: number, open = true): Promise<void> {
  if (!state.plan) return;
  const plan = state.plan;
  const d = await guard('Reading the stop', () => api.stop(plan, index));
  if (!d) return;
  state.selected = d;
  mapView.stops.setSelected(index);
  renderStopDetails();
  if (open) ($('p-stop') as HTMLDetailsElement).open = true;
}

function renderStopZoneOptions(): void {
  const sel = $('stop-zone') as HTMLSelectElement;
  const keep = sel.value;
  sel.innerHTML = '';
  for (const z of state.view?.zones ?? []) sel.appendChild(h('option', { value: z.zone, text: `${z.zone}${z.name ? ` (${z.name})` : ''}` }));
  if (keep) sel.value = keep;
}

function renderStopDetails(): void {
  const d = state.selected;
  const el = $('stop-details');
  el.innerHTML = '';
  $('stop-actions').hidden = !d;
  if (!d) {
    el.appendChild(h('p', { class: 'zp-hint', text: 'Click a stop on the map, or enter its id.' }));
    return;
  }
  el.appendChild(
    h(
      'dl',
      { class: 'zp-dl', 'data-stop-index': d.index, 'data-stop-zone': d.zone },
      h('dt', { text: 'Stop' }), h('dd', { text: `${d.id} (#${d.index})` }),
      h('dt', { text: 'Position' }), h('dd', { text: `${d.lat.toFixed(5)}, ${d.lon.toFixed(5)}` }),
      h('dt', { text: 'Demand' }), h('dd', { text: fmt(d.demand, 2) }),
      h('dt', { text: 'Zone' }), h('dd', { text: String(d.zone) }),
      h('dt', { text: 'To centre' }), h('dd', { text: `${fmtKm(d.km)} (great-circle)` }),
      h('dt', { text: 'Locked' }), h('dd', { text: d.locked ? 'yes: stays in its zone' : 'no' }),
    ),
  );
  ($('stop-zone') as HTMLSelectElement).value = String(d.zone);
  $('stop-lock').textContent = d.locked ? 'Unlock' : 'Lock';
}

$('stop-move').addEventListener('click', () => {
  const d = state.selected;
  if (!d) return;
  const zone = Number(($('stop-zone') as HTMLSelectElement).value);
  if (zone === d.zone) return status(`Stop ${d.id} is already in zone ${zone}`);
  void applyEdit({ kind: 'move', stop: d.index, zone }, `Stop ${d.id} moved to zone ${zone}`);
});
$('stop-lock').addEventListener('click', () => {
  const d = state.selected;
  if (!d) return;
  void applyEdit(d.locked ? { kind: 'unlock', stop: d.index } : { kind: 'lock', stop: d.index }, `Stop ${d.id} ${d.locked ? 'unlocked' : 'locked'}`);
});
$('stop-find').addEventListener('submit', (e) => {
  e.preventDefault();
  void (async () => {
    const q = ($('stop-query') as HTMLInputElement).value.trim();
    if (!q) return;
    const ids = await stopIds();
    let index = ids ? ids.indexOf(q) : -1;
    if (index < 0 && /^#?\d+$/.test(q)) index = Number(q.replace('#', ''));
    if (index < 0 || index >= (state.arrays?.count ?? 0)) return status(`No stop ${q} in this plan`, true);
    await selectStop(index);
  })();
});

// ---------------------------------------------------------------------------------------------
// Project, plan list, stop sets

async function refreshProject(): Promise<void> {
  const p = await guard('Reading the project', () => api.project());
  if (!p) return;
  state.project = p;
  renderPlanList();
  renderStopSets();
}

function renderStopSets(): void {
  const sets = state.project?.stopSets ?? [];
  for (const id of ['run-stopset', 'rebalance-set']) {
    const sel = $(id) as HTMLSelectElement;
    const keep = sel.value;
    sel.innerHTML = '';
    for (const s of sets) sel.appendChild(h('option', { value: s.id, text: `#${s.id} ${s.source.split(/[\\/]/).pop()} (${fmt(s.stops)} stops)` }));
    if (keep && sets.some((s) => String(s.id) === keep)) sel.value = keep;
    else if (state.view && id === 'run-stopset') sel.value = String(state.view.info.stopSetId);
    else if (sets.length) sel.value = String(sets[sets.length - 1]!.id);
  }
}

function renderPlanList(): void {
  const plans = state.project?.plans ?? [];
  const list = $('plan-list');
  list.innerHTML = '';
  list.dataset['count'] = String(plans.length);
  for (const p of plans) {
    const current = p.name === state.plan;
    const b = h('button', { type: 'button', 'data-plan': p.name, 'aria-label': `Open plan ${p.name}: ${p.zones} zones, ${p.stops} stops${p.edits ? `, ${p.edits} edits` : ''}` }, `${p.name} · ${p.zones} zones · ${fmt(p.stops)} stops${p.edits ? ` · ${p.edits} edits` : ''}`);
    b.addEventListener('click', () => void openPlan(p.name));
    list.appendChild(h('li', { 'aria-current': current ? 'true' : null }, b));
  }
  for (const [id, pick] of [['compare-a', 0], ['compare-b', 1]] as const) {
    const sel = $(id) as HTMLSelectElement;
    const keep = sel.value;
    sel.innerHTML = '';
    for (const p of plans) sel.appendChild(h('option', { value: p.name, text: p.name }));
    if (keep && plans.some((p) => p.name === keep)) sel.value = keep;
    else if (plans.length) sel.value = plans[Math.max(0, plans.length - 2 + pick)]!.name;
  }
}

$('rename-form').addEventListener('submit', (e) => {
  e.preventDefault();
  void (async () => {
    const to = ($('rename-to') as HTMLInputElement).value.trim();
    const from = state.plan;
    if (!from || !to) return;
    const p = await guard('Rename', () => api.renamePlan(from, to));
    if (!p) return;
    state.project = p;
    state.plan = to;
    ($('rename-to') as HTMLInputElement).value = '';
    const view = await guard('Reading the plan', () => api.plan(to));
    if (view) render(view);
    renderPlanList();
    status(`Renamed ${from} to ${to}`);
  })();
});

$('compare-form').addEventListener('submit', (e) => {
  e.preventDefault();
  void (async () => {
    const a = ($('compare-a') as HTMLSelectElement).value;
    const b = ($('compare-b') as HTMLSelectElement).value;
    if (!a || !b) return;
    const result = await guard('Compare', () => api.compare(a, b));
    if (!result) return;
    state.comparison = { a, b, result };
    renderComparison();
  })();
});
$('compare-clear').addEventListener('click', () => {
  state.comparison = null;
  mapView.stops.setHighlighted(null);
  $('compare-result').innerHTML = '';
});

async function renderComparison(): Promise<void> {
  const c = state.comparison;
  const el = $('compare-result');
  el.innerHTML = '';
  if (!c) return;
  const r = c.result;
  el.appendChild(h('p', { 'data-changed': r.changedStops, text: `${fmt(r.changedStops)} of ${fmt(r.commonStops)} stops changed zone (demand ${fmt(r.changedDemand)}). Objective ${fmt(r.objectiveBeforeKm2)} → ${fmt(r.objectiveAfterKm2)} km². The map marks those in the plan shown.` }));
  const t = h('table', { class: 'zp-table', 'aria-label': `Workload per zone, ${c.a} then ${c.b}` }, h('thead', {}, h('tr', {}, ...['Zone', `Stops ${c.a}`, `Stops ${c.b}`, `Demand ${c.a}`, `Demand ${c.b}`].map((x) => h('th', { scope: 'col', text: x })))));
  const tb = h('tbody');
  for (const z of r.zones) tb.appendChild(h('tr', { 'data-zone': z.zone }, h('td', { text: z.name ?? z.zone }), h('td', { text: fmt(z.stopsBefore) }), h('td', { text: fmt(z.stopsAfter) }), h('td', { text: fmt(z.demandBefore) }), h('td', { text: fmt(z.demandAfter) })));
  t.appendChild(tb);
  el.appendChild(h('div', { class: 'zp-table-wrap' }, t));
  // Highlight every changed stop that is in the plan on the map (none until they are known).
  mapView.stops.setHighlighted(null);
  $('map').dataset['highlighted'] = '0';
  const shown = state.plan;
  if (!shown || !state.arrays) return;
  const count = state.arrays.count;
  const got = await guard('Marking the changed stops', () => api.changedStopFlags(c.a, c.b, shown));
  if (!got || state.comparison !== c || state.plan !== shown) return;
  const bytes = Uint8Array.from(atob(got.flags), (ch) => ch.charCodeAt(0));
  if (bytes.length !== count) return;
  mapView.stops.setHighlighted(got.marked ? bytes : null);
  $('map').dataset['highlighted'] = String(got.marked);
}

/** The rebalance shown in the Versions panel (null: none, or the project changed since). */
let rebalanceRun: RebalanceStatus | null = null;

const REBALANCE_PHASES: { readonly [phase: string]: string } = { start: 'starting', rebalance: 'assigning', boundaries: 'drawing the zones', done: 'done' };

/** The rebalance's progress bar, message and buttons. */
function showRebalance(s: RebalanceStatus | null): void {
  const bar = $('rebalance-progress');
  const st = s?.state ?? 'idle';
  const f = s ? (s.state === 'done' ? 1 : Math.max(0, Math.min(1, s.fraction))) : 0;
  const phase = s ? (REBALANCE_PHASES[s.phase] ?? s.phase) : '';
  bar.dataset['runState'] = st;
  bar.setAttribute('aria-valuenow', String(Math.round(f * 100)));
  bar.setAttribute('aria-valuetext', s ? `${st}: ${phase} ${Math.round(f * 100)}%` : 'idle');
  $('rebalance-bar').style.width = `${f * 100}%`;
  $('rebalance-message').textContent = s ? `Rebalance of ${s.parent} as ${s.planName}: ${st === 'running' ? `${phase} ${Math.round(f * 100)}%` : st}${s.message ? ` — ${s.message}` : ''}` : '';
  ($('rebalance-run') as HTMLButtonElement).disabled = st === 'running';
  ($('rebalance-cancel') as HTMLButtonElement).disabled = st !== 'running';
}

async function pollRebalance(id: string): Promise<void> {
  let misses = 0;
  for (;;) {
    await new Promise((r) => setTimeout(r, 150));
    if (rebalanceRun?.id !== id) return; // another rebalance is shown now
    const s = await guard('Rebalance status', () => api.rebalanceStatus(id));
    if (rebalanceRun?.id !== id) return;
    // A status call that failed says nothing of the rebalance itself: ask again a few times.
    if (!s && ++misses < 5) continue;
    if (!s) return showRebalance({ ...rebalanceRun, state: 'failed', message: 'its status could not be read; see Plan versions for what was saved' });
    misses = 0;
    rebalanceRun = s;
    showRebalance(s);
    if (s.state === 'running') continue;
    if (s.state === 'done' && s.report) {
      const r = s.report;
      $('rebalance-result').textContent = `Saved ${s.planName}: ${r.added} new stops, ${r.removedStops} gone, ${r.moved} moved (demand ${fmt(r.movedDemand)}), ${r.forced} forced. ${r.feasible ? 'Every limit holds.' : 'Some limits do not hold.'} ${r.notes.join(' ')}`;
      await refreshProject();
      await openPlan(s.planName, false);
      status(`Plan ${s.planName} saved`);
    } else if (s.state === 'cancelled') status(`Rebalance of ${s.parent} cancelled; no plan saved`);
    else status(`Rebalance failed: ${s.message ?? ''}`, true);
    return;
  }
}

$('rebalance-form').addEventListener('submit', (e) => {
  e.preventDefault();
  if (rebalanceRun?.state === 'running') return;
  void (async () => {
    const plan = state.plan;
    if (!plan) return;
    const set = Number(($('rebalance-set') as HTMLSelectElement).value);
    const budgetText = ($('rebalance-budget') as HTMLInputElement).value.trim();
    const name = ($('rebalance-name') as HTMLInputElement).value.trim() || `${plan}-rebalanced`;
    const budget = budgetText ? { stops: Number(budgetText) } : null;
    $('rebalance-result').textContent = '';
    const s = await guard('Rebalance', () => api.startRebalance(plan, set, name, budget));
    if (!s) return;
    rebalanceRun = s;
    showRebalance(s);
    status(`Rebalancing ${s.parent} as ${s.planName}…`);
    await pollRebalance(s.id);
  })();
});
$('rebalance-cancel').addEventListener('click', () => {
  const s = rebalanceRun;
  if (!s || s.state !== 'running') return;
  void guard('Cancel rebalance', () => api.cancelRebalance(s.id));
});

// ---------------------------------------------------------------------------------------------
// Import

function problemsTable(problems: readonly InputProblem[]): HTMLElement {
  const t = h('table', { class: 'zp-table zp-problems' }, h('caption', { text: `${problems.length} problem${problems.length === 1 ? '' : 's'}` }), h('thead', {}, h('tr', {}, ...['Row', 'Field', 'Value', 'Problem'].map((x) => h('th', { scope: 'col', text: x })))));
  const tb = h('tbody');
  for (const p of problems.slice(0, 200)) {
    tb.appendChild(
      h(
        'tr',
        { class: p.severity === 'error' ? 'zp-over' : null, 'data-row': p.row ?? p.feature ?? '' },
        h('td', { text: p.row !== undefined ? `row ${p.row}` : p.feature !== undefined ? `feature ${p.feature}` : '–' }),
        h('td', { text: p.field ?? '' }),
        h('td', { text: p.value ?? '' }),
        h('td', { text: `${p.severity === 'error' ? 'Error' : 'Warning'}: ${p.message}${p.count && p.count > 1 ? ` (${p.count}×)` : ''}` }),
      ),
    );
  }
  t.appendChild(tb);
  return h('div', { class: 'zp-table-wrap' }, t);
}

/** A file's bytes as base64 (through a data: URL, which the browser makes without a JS loop). */
function fileBase64(file: File): Promise<string> {
  return new Promise((resolve, reject) => {
    const reader = new FileReader();
    reader.onload = () => {
      const url = String(reader.result);
      resolve(url.slice(url.indexOf(',') + 1));
    };
    reader.onerror = () => reject(reader.error ?? new Error(`${file.name} could not be read`));
    reader.readAsDataURL(file);
  });
}

async function importFile(file: File): Promise<void> {
  const report = $('import-report');
  report.textContent = `Reading ${file.name}…`;
  ($('p-import') as HTMLDetailsElement).open = true;
  // The bytes go as they are (base64), so that the main side finds the encoding (UTF-16, Latin-1)
  // as it does for files on disk.
  const base64 = await fileBase64(file);
  const out = await guard('Import', () => api.importStops({ name: file.name, base64 }));
  report.innerHTML = '';
  if (!out) {
    report.appendChild(h('p', { class: 'zp-err', 'data-import': 'failed', text: `${file.name} could not be imported. Nothing was imported.` }));
    return;
  }
  if (!out.ok) {
    report.appendChild(h('p', { class: 'zp-err', 'data-import': 'rejected', text: `${out.file}: ${out.errorCount} error${out.errorCount === 1 ? '' : 's'}. Nothing was imported.` }));
    report.appendChild(problemsTable(out.problems));
    status(`${file.name} not imported`, true);
    return;
  }
  const s = out.stopSet;
  report.appendChild(h('p', { class: 'zp-ok', 'data-import': 'ok', 'data-stop-set': s.id, text: `Imported ${fmt(s.stops)} stops (demand ${fmt(s.totalDemand)}) from ${s.source.split(/[\\/]/).pop()} as stop set #${s.id}.` }));
  if (s.warnings.length) report.appendChild(problemsTable(s.warnings));
  await showStopSet(s.id);
}

/** After an import: the project's stop sets again, the new one chosen for the next run. */
async function showStopSet(id: number): Promise<void> {
  await refreshProject();
  ($('run-stopset') as HTMLSelectElement).value = String(id);
  ($('rebalance-set') as HTMLSelectElement).value = String(id);
  status(`Imported stop set #${id}`);
}

$('import-file').addEventListener('change', () => {
  const input = $('import-file') as HTMLInputElement;
  const f = input.files?.[0];
  if (f) void importFile(f).finally(() => (input.value = ''));
});
let dragDepth = 0;
window.addEventListener('dragenter', (e) => {
  if (!e.dataTransfer?.types.includes('Files')) return;
  dragDepth++;
  $('drop-overlay').hidden = false;
});
window.addEventListener('dragleave', () => {
  dragDepth = Math.max(0, dragDepth - 1);
  if (dragDepth === 0) $('drop-overlay').hidden = true;
});
window.addEventListener('dragover', (e) => e.preventDefault());
window.addEventListener('drop', (e) => {
  e.preventDefault();
  dragDepth = 0;
  $('drop-overlay').hidden = true;
  const f = e.dataTransfer?.files[0];
  if (f) void importFile(f);
});

// ---------------------------------------------------------------------------------------------
// Plan runs

function num(id: string): number | undefined {
  const v = ($(id) as HTMLInputElement).value.trim();
  return v === '' || !Number.isFinite(Number(v)) ? undefined : Number(v);
}

function runSettings(): RunSettings {
  const auto = ($('run-auto') as HTMLInputElement).checked;
  const balance = num('run-balance');
  const s: { -readonly [K in keyof RunSettings]: RunSettings[K] } = { zones: auto ? 'auto' : Math.max(1, Math.round(num('run-zones') ?? 8)) };
  const seed = num('run-seed'), capacity = num('run-capacity'), min = num('run-min'), max = num('run-max');
  if (seed !== undefined) s.seed = Math.round(seed);
  if (capacity !== undefined && capacity > 0) s.capacity = capacity;
  if (balance !== undefined && balance > 0) s.balance = balance / 100;
  if (min !== undefined && min > 0) s.minStops = Math.round(min);
  if (max !== undefined && max > 0) s.maxStops = Math.round(max);
  if (depotsText) s.depots = depotsText;
  return s;
}

/** The fixed depots file chosen in the plan panel (its text goes with the run settings). */
let depotsText: { name: string; text: string } | null = null;
$('run-depots').addEventListener('change', () => {
  const input = $('run-depots') as HTMLInputElement;
  const f = input.files?.[0];
  if (!f) return;
  void f.text().then((text) => {
    depotsText = { name: f.name, text };
    ($('run-depots-clear') as HTMLButtonElement).disabled = false;
  });
});
$('run-depots-clear').addEventListener('click', () => {
  depotsText = null;
  ($('run-depots') as HTMLInputElement).value = '';
  ($('run-depots-clear') as HTMLButtonElement).disabled = true;
});

function defaultPlanName(): string {
  const names = new Set((state.project?.plans ?? []).map((p) => p.name));
  for (let i = (state.project?.plans.length ?? 0) + 1; ; i++) if (!names.has(`plan-${i}`)) return `plan-${i}`;
}

function showRun(r: RunStatus | null): void {
  const bar = $('run-progress');
  const state = r?.state ?? 'idle';
  const f = r ? (r.state === 'done' ? 1 : Math.max(0, Math.min(1, r.fraction))) : 0;
  bar.dataset['runState'] = state;
  bar.setAttribute('aria-valuenow', String(Math.round(f * 100)));
  bar.setAttribute('aria-valuetext', r ? `${state}: ${r.phase} ${Math.round(f * 100)}%` : 'idle');
  $('run-bar').style.width = `${f * 100}%`;
  $('run-message').textContent = r ? `${r.planName}: ${state === 'running' ? `${r.phase} ${Math.round(f * 100)}%` : state}${r.message ? ` — ${r.message}` : ''}` : '';
  ($('run-start') as HTMLButtonElement).disabled = state === 'running';
  ($('run-cancel') as HTMLButtonElement).disabled = state !== 'running';
}

async function pollRun(id: string): Promise<void> {
  for (;;) {
    await new Promise((r) => setTimeout(r, 150));
    const r = await guard('Run status', () => api.runStatus(id));
    if (!r) {
      showRun(state.run ? { ...state.run, state: 'failed' } : null);
      return;
    }
    state.run = r;
    showRun(r);
    if (r.state === 'running') continue;
    if (r.state === 'done') {
      await refreshProject();
      await openPlan(r.planName);
      status(`Plan ${r.planName} saved`);
    } else if (r.state === 'cancelled') {
      status(`Run ${r.planName} cancelled; no plan saved`);
      await refreshProject();
    } else status(`Run ${r.planName} failed: ${r.message ?? ''}`, true);
    ($('run-name') as HTMLInputElement).value = defaultPlanName();
    return;
  }
}

$('run-form').addEventListener('submit', (e) => {
  e.preventDefault();
  if (state.run?.state === 'running') return;
  void (async () => {
    const set = Number(($('run-stopset') as HTMLSelectElement).value);
    const name = ($('run-name') as HTMLInputElement).value.trim() || defaultPlanName();
    if (!Number.isFinite(set) || set <= 0) return status('Import stops first', true);
    const r = await guard('Run', () => api.startRun(set, runSettings(), name));
    if (!r) return;
    state.run = r;
    showRun(r);
    status(`Running ${name}…`);
    await pollRun(r.id);
  })();
});
$('run-cancel').addEventListener('click', () => {
  const r = state.run;
  if (!r || r.state !== 'running') return;
  void guard('Cancel', () => api.cancelRun(r.id));
});
$('run-auto').addEventListener('change', () => {
  ($('run-zones') as HTMLInputElement).disabled = ($('run-auto') as HTMLInputElement).checked;
});

// ---------------------------------------------------------------------------------------------
// Export

const EXPORT_FILES = { plan: 'plan.geojson', zones: 'zones.geojson', centres: 'centres.geojson', stops: 'stops.geojson', assignments: 'assignments.csv' } as const;
for (const b of Array.from(document.querySelectorAll<HTMLButtonElement>('[data-export]'))) {
  b.addEventListener('click', () => {
    const kind = b.dataset['export'] as keyof typeof EXPORT_FILES;
    const plan = state.plan;
    if (!plan) return;
    void (async () => {
      const r = await guard('Export', () => api.exportPlan({ plan, kind, file: null }));
      if (!r) return;
      const name = `${plan}-${EXPORT_FILES[kind]}`;
      if (r.content !== null) download(name, r.content, kind === 'assignments' ? 'text/csv' : 'application/geo+json');
      $('export-message').textContent = `${r.file ?? name}: ${fmt(r.bytes)} bytes`;
    })();
  });
}
$('export-png').addEventListener('click', () => {
  const plan = state.plan;
  void guard('PNG', async () => {
    const blob = await mapView.toPng(state.view?.zones ?? []);
    download(`${plan ?? 'map'}-map.png`, blob, 'image/png');
    $('export-message').textContent = `Map PNG: ${fmt(blob.size)} bytes`;
  });
});

// ---------------------------------------------------------------------------------------------
// Map settings (online tiles), kept on the main side for this user (desktop and browser mode alike)

/** Where earlier versions of the window kept the tile setting (per address; carried over once). */
const OLD_TILE_KEY = 'zoneplan.tiles';

function showTiles(tiles: MapSettings['tiles']): void {
  ($('tiles-url') as HTMLInputElement).value = tiles?.url ?? '';
  ($('tiles-attr') as HTMLInputElement).value = tiles?.attribution ?? '';
  mapView.setTiles(tiles?.url ?? '', tiles?.attribution ?? '');
}

$('tiles-form').addEventListener('submit', (e) => {
  e.preventDefault();
  const url = ($('tiles-url') as HTMLInputElement).value.trim();
  const attribution = ($('tiles-attr') as HTMLInputElement).value;
  if (url && !isTileUrl(url)) return status('The tile URL must be https and contain {z}, {x} and {y}', true);
  void (async () => {
    const saved = await guard('Map settings', () => api.saveMapSettings({ tiles: url ? { url, attribution } : null }));
    if (!saved) return;
    showTiles(saved.tiles);
    status(saved.tiles ? 'Online tiles on' : 'Offline outlines');
  })();
});
$('tiles-off').addEventListener('click', () => {
  void (async () => {
    const saved = await guard('Map settings', () => api.saveMapSettings({ tiles: null }));
    if (!saved) return;
    showTiles(null);
    status('Offline outlines');
  })();
});

/** The saved map settings; a tile setting an earlier window kept in this address's storage is carried over once. */
async function loadMapSettings(): Promise<void> {
  let settings = await guard('Map settings', () => api.mapSettings());
  if (!settings) return;
  try {
    const old = JSON.parse(localStorage.getItem(OLD_TILE_KEY) ?? 'null') as { url?: unknown; attr?: unknown } | null;
    let carried = true;
    if (!settings.tiles && old && typeof old.url === 'string' && isTileUrl(old.url)) {
      const saved = await guard('Map settings', () => api.saveMapSettings({ tiles: { url: old.url as string, attribution: typeof old.attr === 'string' ? old.attr : '' } }));
      if (saved) settings = saved;
      carried = saved !== undefined;
    }
    // Kept until it is safely on the main side.
    if (carried) localStorage.removeItem(OLD_TILE_KEY);
  } catch {
    /* storage unavailable: nothing to carry over */
  }
  showTiles(settings.tiles);
}

// ---------------------------------------------------------------------------------------------
// Start

/** The open project: its stop sets and plans, and its newest plan (none: an empty map). */
async function showProject(): Promise<void> {
  await refreshProject();
  const plans = state.project?.plans ?? [];
  ($('run-name') as HTMLInputElement).value = defaultPlanName();
  const latest = [...plans].sort((a, b) => a.createdAt.localeCompare(b.createdAt)).pop();
  if (latest) await openPlan(latest.name);
  else {
    if (state.view) clearPlan();
    status(state.project ? 'No plan yet: import stops and run one' : 'Not connected', !state.project);
  }
}

/** No plan shown (another project without plans was opened). */
function clearPlan(): void {
  centreEditor.end();
  Object.assign(state, { plan: null, view: null, arrays: null, demand: null, ids: null, selected: null, comparison: null });
  spread = new Map();
  mapView.stops.setHighlighted(null);
  mapView.stops.setSelected(null);
  mapView.setStops({ count: 0, lonLat: new Float32Array(0), label: new Int16Array(0), locked: new Uint8Array(0) });
  mapView.setBoundaries(null);
  mapView.setZones([], spread, null);
  renderZoneTable();
  renderWorkloadChart();
  renderHistoryButtons();
  renderStopZoneOptions();
  renderStopDetails();
  for (const id of ['zones-summary', 'compare-result']) $(id).textContent = '';
  $('plan-title').textContent = 'No plan open';
  delete document.body.dataset['planName'];
}

async function start(): Promise<void> {
  renderZoneTable();
  showRun(null);
  await Promise.all([showProject(), loadMapSettings()]);
  // Two frames so the canvases have painted before the window reports itself ready.
  requestAnimationFrame(() => requestAnimationFrame(() => (document.body.dataset['ready'] = '1')));
}

// The desktop menu opens projects and imports stops on the main side, then says what changed
// (window.zoneplanEvents from the preload); the window shows it without a reload. Browser mode
// has no menu and no such hook.
(window as unknown as { zoneplanEvents?: AppEvents }).zoneplanEvents?.onChanged((change) => {
  if (change.what === 'stops') return void showStopSet(change.stopSet);
  // The reports of the project that was open no longer apply.
  for (const id of ['import-report', 'chart-sweep', 'rebalance-result']) $(id).textContent = '';
  // A sweep or rebalance under way was stopped with the project: its poll fetches the end and
  // says why. Those that had ended no longer apply.
  if (sweepRun?.state !== 'running') {
    sweepRun = null;
    sweepDrawn = -1;
    showSweep(null);
  }
  if (rebalanceRun?.state !== 'running') {
    rebalanceRun = null;
    showRebalance(null);
  }
  void showProject();
});

void start();
