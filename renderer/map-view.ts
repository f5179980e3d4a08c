/**
 * The map: offline basemap (or an online tile layer from the settings), zone polygons, the
 * stops canvas, zone centres sized by workload with a ring at the zone's 90th-percentile
 * distance and a label, a legend and a scale bar. The zone polygons follow the plan: newer ones
 * drawn on the main side after an edit replace the older ones when they are ready.
 *
 * Test hooks: #map[data-boundaries-version] (the plan state the polygons drawn show),
 * #map[data-boundaries-pending="1"] while newer ones are on the way, #map[data-boundaries-zones].
 */
import L from 'leaflet';
import type { Api, BoundariesStamp, PlanView } from '../src/api/app-types.js';
import type { ZoneRow } from '../src/api/types.js';
import { createHttpApi } from './api-client.js';
import { OCEAN_COLOUR, offlineBasemap } from './basemap.js';
import { BoundariesFollower } from './boundaries-follow.js';
import { zoneColour } from './palette.js';
import { StopsLayer, type StopsData } from './stops-layer.js';
import { fmt } from './format.js';

export interface MapCallbacks {
  onStopClick(index: number): void;
  onCentreDrop(zone: number, lon: number, lat: number): void;
  /** A centre was clicked, or chosen on its focused marker with Enter or C. */
  onCentreSelect(zone: number): void;
  /** Asks for a plan again, for its newer polygons (default: the window's Api). */
  planView?(name: string): Promise<PlanView>;
}

/** The Api the window uses (the desktop preload's, else browser mode's with the page's token). */
function windowApi(): Api {
  const desktop = (window as unknown as { zoneplan?: Api }).zoneplan;
  return desktop ?? createHttpApi(new URLSearchParams(location.search).get('token') ?? '');
}

export class MapView {
  readonly map: L.Map;
  readonly stops = new StopsLayer();
  private readonly vectorRenderer: L.Canvas;
  private basemap: L.GeoJSON;
  private tiles: L.TileLayer | null = null;
  private polygons: L.GeoJSON | null = null;
  private readonly centres = L.layerGroup();
  private readonly rings = L.layerGroup();
  private readonly legend: L.Control;
  private legendEl: HTMLElement;
  private data: StopsData | null = null;
  private readonly markers = new Map<number, L.Marker>();
  /** The centre being moved from the keyboard, where it is shown. */
  private editing: { zone: number; lon: number; lat: number } | null = null;
  private readonly follower: BoundariesFollower;

  constructor(private readonly el: HTMLElement, private readonly cb: MapCallbacks) {
    const planView = cb.planView ? (name: string) => cb.planView!(name) : (name: string) => windowApi().plan(name);
    this.follower = new BoundariesFollower(
      planView,
      (fc, stamp) => this.drawBoundaries(fc, stamp),
      (waiting) => (this.el.dataset['boundariesPending'] = waiting ? '1' : '0'),
    );
    el.style.background = OCEAN_COLOUR;
    this.map = L.map(el, { preferCanvas: true, worldCopyJump: false, keyboard: true, zoomSnap: 0.25 }).setView([20, 0], 2);
    this.vectorRenderer = L.canvas({ padding: 0.2 });
    this.basemap = offlineBasemap(this.vectorRenderer).addTo(this.map);
    this.rings.addTo(this.map);
    this.stops.addTo(this.map);
    this.centres.addTo(this.map);
    L.control.scale({ metric: true, imperial: false, position: 'bottomleft' }).addTo(this.map);
    this.legendEl = L.DomUtil.create('div', 'zp-legend');
    this.legendEl.setAttribute('aria-label', 'Map legend');
    const legendEl = this.legendEl;
    const Legend = L.Control.extend({ onAdd: () => legendEl });
    this.legend = new Legend({ position: 'bottomright' });
    this.legend.addTo(this.map);
    this.map.attributionControl.setPrefix('Leaflet');
    this.map.attributionControl.addAttribution('Basemap: Natural Earth (world-atlas)');
    this.map.on('click', (e: L.LeafletMouseEvent) => {
      const hit = this.stops.hit(e.containerPoint);
      if (hit !== null) this.cb.onStopClick(hit);
    });
  }

  /** An online tile layer instead of the offline outlines; an empty URL goes back offline. */
  setTiles(url: string, attribution: string): void {
    if (this.tiles) this.tiles.remove();
    this.tiles = null;
    if (url.trim()) {
      // Leaflet shows the attribution as HTML: what the user typed is shown as text.
      this.tiles = L.tileLayer(url.trim(), { attribution: escapeHtml(attribution.trim() || url.trim()), maxZoom: 19 }).addTo(this.map);
      this.basemap.remove();
    } else if (!this.map.hasLayer(this.basemap)) {
      this.basemap.addTo(this.map);
    }
  }

  setStops(data: StopsData): void {
    this.data = data;
    this.stops.setData(data);
  }

  /**
   * The zone polygons of the plan view shown. Polygons older than those on the map are not drawn
   * over them; while newer ones are being drawn on the main side, they are fetched when ready.
   */
  setBoundaries(fc: unknown | null): void {
    this.follower.offer(fc);
  }

  private drawBoundaries(fc: unknown | null, stamp: BoundariesStamp | null): void {
    if (stamp) this.el.dataset['boundariesVersion'] = String(stamp.boundariesVersion);
    else delete this.el.dataset['boundariesVersion'];
    const features = (fc as { features?: unknown } | null)?.features;
    this.el.dataset['boundariesZones'] = String(Array.isArray(features) ? features.length : 0);
    if (this.polygons) this.polygons.remove();
    this.polygons = null;
    if (!fc || typeof fc !== 'object') return;
    this.polygons = L.geoJSON(fc as GeoJSON.GeoJsonObject, {
      renderer: this.vectorRenderer,
      interactive: false,
      style: (f) => {
        const z = Number((f?.properties as { zone?: unknown } | null)?.zone ?? 0);
        return { color: zoneColour(z), weight: 1.5, opacity: 0.9, fillColor: zoneColour(z), fillOpacity: 0.12 };
      },
    } as L.GeoJSONOptions).addTo(this.map);
  }

  /** Centres, rings and labels; `spreadKm[zone]` is the 90th-percentile distance of its stops. */
  setZones(zones: readonly ZoneRow[], spreadKm: ReadonlyMap<number, number>, capacity: number | null): void {
    this.centres.clearLayers();
    this.markers.clear();
    this.rings.clearLayers();
    const maxDemand = Math.max(1e-9, ...zones.map((z) => z.demand));
    for (const z of zones) {
      const [lon, lat] = z.centre;
      const colour = zoneColour(z.zone);
      const p90 = spreadKm.get(z.zone);
      if (p90 !== undefined && p90 > 0) {
        L.circle([lat, lon], { radius: p90 * 1000, renderer: this.vectorRenderer, interactive: false, color: colour, weight: 2, dashArray: '6 4', fill: false }).addTo(this.rings);
      }
      const d = Math.round(18 + 22 * Math.sqrt(z.demand / maxDemand));
      const over = z.breaksLimits || (capacity !== null && z.demand > capacity);
      const icon = L.divIcon({ className: `zp-centre${over ? ' zp-over' : ''}${z.fixed ? ' zp-fixed' : ''}`, iconSize: [d, d], html: `<span>${z.zone}</span>` });
      const editing = this.editing?.zone === z.zone ? this.editing : null;
      const m = L.marker(editing ? [editing.lat, editing.lon] : [lat, lon], { icon, draggable: true, keyboard: true, title: `Zone ${z.zone} centre: drag to pin it; click, Enter or C opens the centre bar (arrow keys, pin, unpin)`, alt: `Zone ${z.zone} centre`, riseOnHover: true, autoPan: true });
      m.on('add', () => {
        const el = m.getElement();
        if (el) {
          el.style.background = colour;
          el.dataset['zone'] = String(z.zone);
          el.setAttribute('aria-label', `Zone ${z.zone} centre: ${z.stops} stops, demand ${fmt(z.demand)}${z.fixed ? ', pinned' : ''}. Enter or C moves it with the arrow keys.`);
          el.classList.toggle('zp-centre-active', this.editing?.zone === z.zone);
          el.addEventListener('keydown', (e) => {
            if (e.ctrlKey || e.metaKey || e.altKey || !(e.key === 'Enter' || e.key === 'c' || e.key === 'C')) return;
            e.preventDefault();
            e.stopPropagation();
            this.cb.onCentreSelect(z.zone);
          });
        }
      });
      // Leaflet fires no click at the end of a drag.
      m.on('click', () => this.cb.onCentreSelect(z.zone));
      this.markers.set(z.zone, m);
      // Labels stay on up to 16 zones; with more they would cover each other, so they show on hover and focus.
      // The label as text: zone names come from depot files, never read as HTML.
      const label = document.createElement('span');
      label.textContent = `${z.name ?? `Zone ${z.zone}`}: ${fmt(z.stops)} stops · ${fmt(z.demand)}`;
      m.bindTooltip(label, { permanent: zones.length <= 16, direction: 'top', offset: [0, -d / 2], className: 'zp-centre-label' });
      m.on('dragend', () => {
        const ll = m.getLatLng();
        this.cb.onCentreDrop(z.zone, ll.lng, ll.lat);
      });
      m.addTo(this.centres);
    }
    this.legendEl.innerHTML = '';
    const title = document.createElement('strong');
    title.textContent = 'Zones';
    this.legendEl.appendChild(title);
    const list = document.createElement('ul');
    for (const z of zones) {
      const li = document.createElement('li');
      const sw = document.createElement('span');
      sw.className = 'zp-swatch';
      sw.style.background = zoneColour(z.zone);
      li.append(sw, document.createTextNode(` ${z.name ?? z.zone}`));
      list.appendChild(li);
    }
    this.legendEl.appendChild(list);
    const key = document.createElement('div');
    key.className = 'zp-legend-key';
    key.textContent = 'Centre size: workload. Dashed ring: 90% of stops within. Square centre: pinned. Boxed stop: locked.';
    this.legendEl.appendChild(key);
  }

  /**
   * Shows a zone's centre at a position and marks it as the one being moved from the keyboard
   * (the map pans to keep it in view); null ends the marking and leaves the markers where they are.
   */
  previewCentre(zone: number | null, lon: number, lat: number): void {
    for (const [z, m] of this.markers) m.getElement()?.classList.toggle('zp-centre-active', z === zone);
    if (zone === null) {
      this.editing = null;
      return;
    }
    this.editing = { zone, lon, lat };
    const m = this.markers.get(zone);
    if (!m) return;
    const ll = L.latLng(lat, lon);
    m.setLatLng(ll);
    this.map.panInside(ll, { padding: [60, 60], animate: false });
  }

  /** Ground metres per screen pixel across the middle of the map. */
  metresPerPixel(): number {
    const size = this.map.getSize();
    const y = size.y / 2;
    const half = Math.max(1, Math.min(50, size.x / 4));
    const a = this.map.containerPointToLatLng([size.x / 2 - half, y]);
    const b = this.map.containerPointToLatLng([size.x / 2 + half, y]);
    const m = this.map.distance(a, b) / (2 * half);
    return Number.isFinite(m) && m > 0 ? m : 100;
  }

  fitStops(): void {
    const d = this.data;
    if (!d || d.count === 0) return;
    let w = 180, s = 90, e = -180, n = -90;
    for (let i = 0; i < d.count; i++) {
      const lon = d.lonLat[2 * i]!;
      const lat = d.lonLat[2 * i + 1]!;
      if (lon < w) w = lon;
      if (lon > e) e = lon;
      if (lat < s) s = lat;
      if (lat > n) n = lat;
    }
    this.map.fitBounds([[s, w], [n, e]], { padding: [20, 20], animate: false });
  }

  fitZone(zone: number): void {
    const d = this.data;
    if (!d) return;
    let w = 180, s = 90, e = -180, n = -90, any = false;
    for (let i = 0; i < d.count; i++) {
      if (d.label[i] !== zone) continue;
      any = true;
      const lon = d.lonLat[2 * i]!;
      const lat = d.lonLat[2 * i + 1]!;
      if (lon < w) w = lon;
      if (lon > e) e = lon;
      if (lat < s) s = lat;
      if (lat > n) n = lat;
    }
    if (any) this.map.fitBounds([[s, w], [n, e]], { padding: [30, 30], animate: false });
  }

  /** One PNG of what the map shows: ocean, every canvas (basemap, polygons, rings, stops) and the centres. */
  async toPng(zones: readonly ZoneRow[]): Promise<Blob> {
    const container = this.map.getContainer();
    const box = container.getBoundingClientRect();
    const out = document.createElement('canvas');
    out.width = Math.round(box.width);
    out.height = Math.round(box.height);
    const ctx = out.getContext('2d')!;
    ctx.fillStyle = OCEAN_COLOUR;
    ctx.fillRect(0, 0, out.width, out.height);
    for (const c of Array.from(container.querySelectorAll('canvas'))) {
      const r = c.getBoundingClientRect();
      if (r.width === 0 || r.height === 0) continue;
      ctx.drawImage(c, r.left - box.left, r.top - box.top, r.width, r.height);
    }
    const maxDemand = Math.max(1e-9, ...zones.map((z) => z.demand));
    ctx.font = 'bold 12px sans-serif';
    ctx.textAlign = 'center';
    ctx.textBaseline = 'middle';
    for (const z of zones) {
      const p = this.map.latLngToContainerPoint([z.centre[1], z.centre[0]]);
      const rad = (18 + 22 * Math.sqrt(z.demand / maxDemand)) / 2;
      ctx.beginPath();
      ctx.arc(p.x, p.y, rad, 0, 2 * Math.PI);
      ctx.fillStyle = zoneColour(z.zone);
      ctx.fill();
      ctx.lineWidth = 2;
      ctx.strokeStyle = '#ffffff';
      ctx.stroke();
      ctx.fillStyle = '#000000';
      ctx.fillText(String(z.zone), p.x, p.y);
    }
    ctx.textAlign = 'left';
    ctx.font = '11px sans-serif';
    ctx.fillStyle = '#222222';
    // Online tiles cannot be copied into the image (another site's pixels): the note says they are left out.
    const basemap = this.tiles ? 'Online tiles left out of this image.' : 'Basemap: Natural Earth.';
    ctx.fillText(`Great-circle (straight-line) distances, not drive times. ${basemap}`, 8, out.height - 10);
    return new Promise((resolve, reject) => out.toBlob((b) => (b ? resolve(b) : reject(new Error('The map could not be drawn to PNG.'))), 'image/png'));
  }
}

/** Text for a place Leaflet fills as HTML. */
export function escapeHtml(s: string): string {
  return s.replace(/[&<>"']/g, (c) => ({ '&': '&amp;', '<': '&lt;', '>': '&gt;', '"': '&quot;', "'": '&#39;' })[c]!);
}
