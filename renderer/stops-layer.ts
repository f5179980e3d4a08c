/**
 * All stops of a plan on one canvas, drawn in one pass over typed arrays straight into
 * ImageData (no per-stop Leaflet objects: 100k circleMarkers cost far more to build and redraw).
 * Positions are projected to Web Mercator once per plan; a redraw (after a pan or zoom) is a
 * multiply-add per stop. Locked, highlighted and selected stops get outlines on top.
 */
import L from 'leaflet';
import { zoneColour32 } from './palette.js';

const MAX_LAT = 85.0511287798;

export interface StopsData {
  readonly count: number;
  readonly lonLat: Float32Array;
  /** Zone label (1-based) per stop, 0 when unassigned. */
  readonly label: Int16Array;
  readonly locked: Uint8Array;
}

export class StopsLayer extends L.Layer {
  private canvas: HTMLCanvasElement | null = null;
  private data: StopsData | null = null;
  /** Mercator x, y in [0, 1) at zoom 0. */
  private wx = new Float64Array(0);
  private wy = new Float64Array(0);
  private highlighted: Uint8Array | null = null;
  private selected: number | null = null;
  private topLeft = L.point(0, 0);
  private offX = 0;
  private offY = 0;
  private scale = 256;
  /** Milliseconds the last redraw took. */
  lastDrawMs = 0;

  override onAdd(map: L.Map): this {
    if (!map.getPane('zpStops')) {
      const pane = map.createPane('zpStops');
      pane.style.zIndex = '450';
      pane.style.pointerEvents = 'none';
    }
    const canvas = L.DomUtil.create('canvas', 'zp-stops leaflet-zoom-hide') as HTMLCanvasElement;
    canvas.setAttribute('aria-hidden', 'true');
    map.getPane('zpStops')!.appendChild(canvas);
    this.canvas = canvas;
    map.on('moveend zoomend resize viewreset', this.redraw, this);
    this.redraw();
    return this;
  }

  override onRemove(map: L.Map): this {
    map.off('moveend zoomend resize viewreset', this.redraw, this);
    this.canvas?.remove();
    this.canvas = null;
    return this;
  }

  getCanvas(): HTMLCanvasElement | null {
    return this.canvas;
  }

  setData(data: StopsData): void {
    this.data = data;
    const n = data.count;
    this.wx = new Float64Array(n);
    this.wy = new Float64Array(n);
    const d2r = Math.PI / 180;
    for (let i = 0; i < n; i++) {
      const lon = data.lonLat[2 * i]!;
      const lat = Math.max(-MAX_LAT, Math.min(MAX_LAT, data.lonLat[2 * i + 1]!));
      this.wx[i] = lon / 360 + 0.5;
      this.wy[i] = 0.5 - Math.log(Math.tan(Math.PI / 4 + (lat * d2r) / 2)) / (2 * Math.PI);
    }
    if (this.highlighted && this.highlighted.length !== n) this.highlighted = null;
    this.redraw();
  }

  setHighlighted(flags: Uint8Array | null): void {
    this.highlighted = flags;
    this.redraw();
  }

  setSelected(index: number | null): void {
    this.selected = index;
    this.redraw();
  }

  /** The stop nearest to a container point within `radiusPx`, or null. */
  hit(container: L.Point, radiusPx = 7): number | null {
    const d = this.data;
    if (!d || !this.canvas) return null;
    // A container point in canvas coordinates: the canvas sits at the layer point topLeft.
    const corner = this._map.containerPointToLayerPoint([0, 0]);
    const px = container.x + corner.x - this.topLeft.x;
    const py = container.y + corner.y - this.topLeft.y;
    const ox = this.offX;
    const oy = this.offY;
    let best: number | null = null;
    let bestD = radiusPx * radiusPx;
    const s = this.scale;
    for (let i = 0; i < d.count; i++) {
      const dx = this.wx[i]! * s - ox - px;
      const dy = this.wy[i]! * s - oy - py;
      const dd = dx * dx + dy * dy;
      if (dd <= bestD) {
        bestD = dd;
        best = i;
      }
    }
    return best;
  }

  redraw(): void {
    const map = this._map;
    const canvas = this.canvas;
    if (!map || !canvas) return;
    const t0 = performance.now();
    const size = map.getSize();
    const topLeft = map.containerPointToLayerPoint([0, 0]).round();
    this.topLeft = topLeft;
    L.DomUtil.setPosition(canvas, topLeft);
    if (canvas.width !== size.x || canvas.height !== size.y) {
      canvas.width = size.x;
      canvas.height = size.y;
      canvas.style.width = `${size.x}px`;
      canvas.style.height = `${size.y}px`;
    }
    const ctx = canvas.getContext('2d');
    if (!ctx) return;
    const d = this.data;
    if (!d || d.count === 0 || size.x === 0 || size.y === 0) {
      ctx.clearRect(0, 0, canvas.width, canvas.height);
      this.lastDrawMs = performance.now() - t0;
      return;
    }
    const origin = map.getPixelOrigin();
    const s = 256 * Math.pow(2, map.getZoom());
    this.scale = s;
    this.offX = origin.x + topLeft.x;
    this.offY = origin.y + topLeft.y;
    const w = size.x;
    const h = size.y;
    const img = ctx.createImageData(w, h);
    const px = new Uint32Array(img.data.buffer);
    const colours = new Uint32Array(256);
    for (let k = 0; k < 256; k++) colours[k] = k === 0 ? 0xff808080 : zoneColour32(k);
    const r = d.count > 20000 ? 1 : 2; // half-size of the square dot
    const wx = this.wx;
    const wy = this.wy;
    const ox = this.offX;
    const oy = this.offY;
    const label = d.label;
    for (let i = 0; i < d.count; i++) {
      const x = (wx[i]! * s - ox) | 0;
      const y = (wy[i]! * s - oy) | 0;
      if (x < r || y < r || x >= w - r || y >= h - r) continue;
      const c = colours[label[i]! & 255]!;
      for (let yy = y - r; yy <= y + r; yy++) {
        const row = yy * w;
        for (let xx = x - r; xx <= x + r; xx++) px[row + xx] = c;
      }
    }
    ctx.putImageData(img, 0, 0);
    // Outlines: locked stops (dark square), highlighted (changed) stops, the selected stop.
    ctx.lineWidth = 1.5;
    ctx.strokeStyle = '#111111';
    ctx.beginPath();
    let anyLocked = false;
    for (let i = 0; i < d.count; i++) {
      if (!d.locked[i]) continue;
      const x = wx[i]! * s - ox;
      const y = wy[i]! * s - oy;
      if (x < -5 || y < -5 || x > w + 5 || y > h + 5) continue;
      ctx.rect(x - 4, y - 4, 8, 8);
      anyLocked = true;
    }
    if (anyLocked) ctx.stroke();
    const hl = this.highlighted;
    if (hl) {
      ctx.strokeStyle = '#d6006e';
      ctx.lineWidth = 2;
      ctx.beginPath();
      for (let i = 0; i < d.count; i++) {
        if (!hl[i]) continue;
        const x = wx[i]! * s - ox;
        const y = wy[i]! * s - oy;
        if (x < -6 || y < -6 || x > w + 6 || y > h + 6) continue;
        ctx.moveTo(x + 5, y);
        ctx.arc(x, y, 5, 0, 2 * Math.PI);
      }
      ctx.stroke();
    }
    const sel = this.selected;
    if (sel !== null && sel < d.count) {
      const x = wx[sel]! * s - ox;
      const y = wy[sel]! * s - oy;
      ctx.lineWidth = 3;
      ctx.strokeStyle = '#ffffff';
      ctx.beginPath();
      ctx.arc(x, y, 8, 0, 2 * Math.PI);
      ctx.stroke();
      ctx.lineWidth = 1.5;
      ctx.strokeStyle = '#000000';
      ctx.stroke();
    }
    this.lastDrawMs = performance.now() - t0;
  }
}
