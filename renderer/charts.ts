/** Inline SVG charts: workload per zone (bars), and objective and workload spread against K (lines). */
import type { SweepRow, ZoneRow } from '../src/api/types.js';
import { zoneColour } from './palette.js';
import { compact, fmt } from './format.js';

const NS = 'http://www.w3.org/2000/svg';

function s<K extends keyof SVGElementTagNameMap>(tag: K, attrs: Record<string, string | number>, text?: string): SVGElementTagNameMap[K] {
  const el = document.createElementNS(NS, tag);
  for (const [k, v] of Object.entries(attrs)) el.setAttribute(k, String(v));
  if (text !== undefined) el.textContent = text;
  return el;
}

export function workloadChart(zones: readonly ZoneRow[], capacity: number | null): SVGSVGElement {
  const W = 320, H = 160, L = 40, B = 22, T = 10, R = 8;
  const svg = s('svg', { viewBox: `0 0 ${W} ${H}`, width: '100%', role: 'img', class: 'zp-chart' });
  svg.appendChild(s('title', {}, `Workload per zone: ${zones.map((z) => `zone ${z.zone} ${fmt(z.demand)}`).join(', ')}`));
  const max = Math.max(1e-9, capacity ?? 0, ...zones.map((z) => z.demand));
  const bw = (W - L - R) / Math.max(1, zones.length);
  const y = (v: number) => H - B - ((H - B - T) * v) / max;
  svg.appendChild(s('line', { x1: L, y1: H - B, x2: W - R, y2: H - B, stroke: '#555' }));
  svg.appendChild(s('text', { x: L - 4, y: y(max) + 4, 'text-anchor': 'end', 'font-size': 9 }, compact(max)));
  svg.appendChild(s('text', { x: L - 4, y: H - B, 'text-anchor': 'end', 'font-size': 9 }, '0'));
  zones.forEach((z, i) => {
    const x = L + i * bw;
    const over = z.breaksLimits || (capacity !== null && z.demand > capacity);
    const bar = s('rect', { x: x + bw * 0.12, y: y(z.demand), width: bw * 0.76, height: Math.max(0, H - B - y(z.demand)), fill: zoneColour(z.zone), stroke: over ? '#b00020' : '#333', 'stroke-width': over ? 2 : 0.5 });
    bar.appendChild(s('title', {}, `Zone ${z.zone}: ${fmt(z.demand)}${over ? ' (over its limit)' : ''}`));
    svg.appendChild(bar);
    if (zones.length <= 30) svg.appendChild(s('text', { x: x + bw / 2, y: H - B + 12, 'text-anchor': 'middle', 'font-size': 9 }, String(z.zone)));
  });
  if (capacity !== null) {
    svg.appendChild(s('line', { x1: L, y1: y(capacity), x2: W - R, y2: y(capacity), stroke: '#b00020', 'stroke-dasharray': '4 3' }));
    svg.appendChild(s('text', { x: W - R, y: y(capacity) - 3, 'text-anchor': 'end', 'font-size': 9, fill: '#b00020' }, `capacity ${compact(capacity)}`));
  }
  const mean = zones.reduce((a, z) => a + z.demand, 0) / Math.max(1, zones.length);
  svg.appendChild(s('line', { x1: L, y1: y(mean), x2: W - R, y2: y(mean), stroke: '#1b1b1b', 'stroke-dasharray': '1 3' }));
  return svg;
}

/** Two lines over K: objective (left axis) and the coefficient of variation of zone demand (right axis). */
export function sweepChart(rows: readonly SweepRow[]): SVGSVGElement {
  const W = 320, H = 170, L = 46, B = 26, T = 12, R = 40;
  const svg = s('svg', { viewBox: `0 0 ${W} ${H}`, width: '100%', role: 'img', class: 'zp-chart' });
  const ok = rows.filter((r) => Number.isFinite(r.objectiveKm2));
  svg.appendChild(s('title', {}, `Objective and workload spread against the number of zones: ${ok.map((r) => `K=${r.zones} objective ${fmt(r.objectiveKm2)} spread ${fmt(r.demandCv, 2)}`).join('; ')}`));
  if (ok.length === 0) return svg;
  const k0 = Math.min(...ok.map((r) => r.zones));
  const k1 = Math.max(...ok.map((r) => r.zones));
  const oMax = Math.max(1e-9, ...ok.map((r) => r.objectiveKm2));
  const cMax = Math.max(1e-9, ...ok.map((r) => r.demandCv));
  const x = (k: number) => L + ((W - L - R) * (k - k0)) / Math.max(1, k1 - k0);
  const yo = (v: number) => H - B - ((H - B - T) * v) / oMax;
  const yc = (v: number) => H - B - ((H - B - T) * v) / cMax;
  svg.appendChild(s('line', { x1: L, y1: H - B, x2: W - R, y2: H - B, stroke: '#555' }));
  for (const r of ok) svg.appendChild(s('text', { x: x(r.zones), y: H - B + 12, 'text-anchor': 'middle', 'font-size': 9 }, String(r.zones)));
  svg.appendChild(s('text', { x: (W - R + L) / 2, y: H - 2, 'text-anchor': 'middle', 'font-size': 9 }, 'zones (K)'));
  svg.appendChild(s('text', { x: L - 4, y: T + 4, 'text-anchor': 'end', 'font-size': 9, fill: '#1f5fa0' }, compact(oMax)));
  svg.appendChild(s('text', { x: L + 4, y: T + 4, 'font-size': 9, fill: '#1f5fa0' }, '● objective km²'));
  svg.appendChild(s('text', { x: W - R - 4, y: T + 4, 'text-anchor': 'end', 'font-size': 9, fill: '#c2410c' }, '■ spread (CV)'));
  svg.appendChild(s('text', { x: W - R + 4, y: T + 4, 'font-size': 9, fill: '#c2410c' }, fmt(cMax, 2)));
  const line = (pts: string, colour: string, dash: string) => s('polyline', { points: pts, fill: 'none', stroke: colour, 'stroke-width': 2, 'stroke-dasharray': dash });
  svg.appendChild(line(ok.map((r) => `${x(r.zones)},${yo(r.objectiveKm2)}`).join(' '), '#1f5fa0', ''));
  svg.appendChild(line(ok.map((r) => `${x(r.zones)},${yc(r.demandCv)}`).join(' '), '#c2410c', '5 3'));
  for (const r of ok) {
    svg.appendChild(s('circle', { cx: x(r.zones), cy: yo(r.objectiveKm2), r: 3, fill: '#1f5fa0' }));
    svg.appendChild(s('rect', { x: x(r.zones) - 3, y: yc(r.demandCv) - 3, width: 6, height: 6, fill: '#c2410c' }));
  }
  return svg;
}
