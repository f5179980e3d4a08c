/**
 * Moving and pinning a zone centre from the keyboard. A centre is chosen (C on a zone row, on a
 * focused centre marker or anywhere outside a text field; Enter on a marker; a click on one),
 * then the centre bar over the map holds the focus: the arrow keys nudge the centre by the step
 * it shows (Shift: ten steps), + and - change the step, Enter or P pins the centre where it is
 * shown, U frees a pinned centre, N and Shift+N go to the next or previous zone, Escape cancels.
 *
 * Nothing is sent until the centre is pinned or freed: the marker moves on the map only. The
 * offsets shown are the sums of the steps taken (the input, not a figure of the plan).
 *
 * Test hooks: #centre-edit[data-zone][data-lon][data-lat][data-step-m][data-fixed] while open.
 */
import type { ZoneRow } from '../src/api/types.js';
import { fmt } from './format.js';

/** The steps offered, metres. */
export const STEPS_M: readonly number[] = [10, 25, 50, 100, 250, 500, 1000, 2500, 5000, 10_000, 25_000, 50_000, 100_000];
/** The first step is about this many screen pixels at the map's scale. */
const STEP_PIXELS = 10;
/** Metres per degree of latitude on the sphere of radius 6371.0088 km (the app's Earth radius). */
const M_PER_DEG = (6_371_008.8 * Math.PI) / 180;

export interface CentreEditHost {
  /** The zones in the order the zone table shows them. */
  zones(): readonly ZoneRow[];
  /** Ground metres per screen pixel at the map's centre. */
  metresPerPixel(): number;
  /** Shows the zone's centre at a position (marked as being edited), or ends the marking (null). */
  preview(zone: number | null, lon: number, lat: number): void;
  /** Pins the centre there; false when the edit was refused (the bar stays open). */
  pin(zone: number, lon: number, lat: number): Promise<boolean>;
  /** Frees a pinned centre; `at` moves it there too (null: it stays where it is). False when refused. */
  unpin(zone: number, at: [number, number] | null): Promise<boolean>;
  status(message: string, error?: boolean): void;
  /** Where the focus goes when the bar closes, for the zone it was editing. */
  focusAfter(zone: number): HTMLElement | null;
}

interface Editing {
  zone: number;
  fixed: boolean;
  base: [number, number];
  lon: number;
  lat: number;
  eastM: number;
  northM: number;
}

const distance = (m: number): string => (Math.abs(m) >= 1000 ? `${fmt(m / 1000, Math.abs(m) >= 10_000 ? 1 : 2)} km` : `${fmt(m, 0)} m`);

export class CentreEditor {
  private editing: Editing | null = null;
  private step = 5;
  private busy = false;

  constructor(
    private readonly bar: HTMLElement,
    private readonly host: CentreEditHost,
  ) {
    bar.addEventListener('keydown', (e) => this.onKey(e));
    bar.querySelector('[data-centre-action=pin]')?.addEventListener('click', () => void this.pin());
    bar.querySelector('[data-centre-action=unpin]')?.addEventListener('click', () => void this.unpin());
    bar.querySelector('[data-centre-action=cancel]')?.addEventListener('click', () => this.cancel());
  }

  get active(): boolean {
    return this.editing !== null;
  }

  get zone(): number | null {
    return this.editing?.zone ?? null;
  }

  /** Opens the bar on a zone's centre (a step fitted to the map's scale) and focuses it. */
  start(zone: number): void {
    const z = this.host.zones().find((r) => r.zone === zone);
    if (!z) return;
    if (this.editing && this.editing.zone !== zone) this.host.preview(this.editing.zone, ...this.editing.base);
    const [lon, lat] = z.centre;
    this.editing = { zone, fixed: z.fixed, base: [lon, lat], lon, lat, eastM: 0, northM: 0 };
    const wanted = this.host.metresPerPixel() * STEP_PIXELS;
    let k = 0;
    while (k + 1 < STEPS_M.length && STEPS_M[k + 1]! <= wanted) k++;
    this.step = k;
    this.host.preview(zone, lon, lat);
    this.show();
    this.bar.hidden = false;
    this.bar.focus();
  }

  /** After the plan was drawn again: the zone's state from the new rows; the bar closes if the zone is gone. */
  sync(): void {
    const e = this.editing;
    if (!e) return;
    const z = this.host.zones().find((r) => r.zone === e.zone);
    if (!z) {
      this.close(false);
      return;
    }
    e.fixed = z.fixed;
    this.host.preview(e.zone, e.lon, e.lat);
    this.show();
  }

  /** Puts the centre back where it was and closes the bar. */
  cancel(): void {
    const e = this.editing;
    if (!e) return;
    this.host.preview(e.zone, ...e.base);
    this.host.status(`Zone ${e.zone} centre: move cancelled`);
    this.close(true);
  }

  /** Closes the bar without moving the centre back or the focus (another plan is opened). */
  end(): void {
    if (this.editing) this.close(false);
  }

  private close(refocus: boolean): void {
    const zone = this.editing?.zone;
    this.editing = null;
    this.host.preview(null, 0, 0);
    this.bar.hidden = true;
    for (const k of ['zone', 'lon', 'lat', 'stepM', 'fixed']) delete this.bar.dataset[k];
    if (refocus && zone !== undefined) this.host.focusAfter(zone)?.focus();
  }

  private nudge(east: number, north: number): void {
    const e = this.editing;
    if (!e) return;
    const d = STEPS_M[this.step]!;
    const lat = Math.max(-89.999, Math.min(89.999, e.lat + (north * d) / M_PER_DEG));
    let lon = e.lon + (east * d) / (M_PER_DEG * Math.max(1e-6, Math.cos((e.lat * Math.PI) / 180)));
    if (lon > 180) lon -= 360;
    if (lon < -180) lon += 360;
    e.lon = lon;
    e.lat = lat;
    e.eastM += east * d;
    e.northM += north * d;
    this.host.preview(e.zone, lon, lat);
    this.show();
  }

  private changeStep(by: number): void {
    this.step = Math.max(0, Math.min(STEPS_M.length - 1, this.step + by));
    this.show();
  }

  private other(by: 1 | -1): void {
    const e = this.editing;
    if (!e) return;
    const zones = this.host.zones();
    if (zones.length === 0) return;
    const at = zones.findIndex((z) => z.zone === e.zone);
    const next = zones[(at + by + zones.length) % zones.length]!;
    this.start(next.zone);
  }

  private async pin(): Promise<void> {
    const e = this.editing;
    if (!e || this.busy) return;
    this.busy = true;
    let done = false;
    try {
      done = await this.host.pin(e.zone, e.lon, e.lat);
    } finally {
      this.busy = false;
    }
    if (done && this.editing === e) this.close(true);
  }

  private async unpin(): Promise<void> {
    const e = this.editing;
    if (!e || this.busy) return;
    if (!e.fixed) {
      this.host.status(`Zone ${e.zone} centre is not pinned: Enter or P pins it`, true);
      return;
    }
    this.busy = true;
    let done = false;
    try {
      done = await this.host.unpin(e.zone, e.eastM === 0 && e.northM === 0 ? null : [e.lon, e.lat]);
    } finally {
      this.busy = false;
    }
    if (done && this.editing === e) this.close(true);
  }

  private onKey(ev: KeyboardEvent): void {
    if (!this.editing || ev.ctrlKey || ev.metaKey || ev.altKey) return;
    const onButton = (ev.target as HTMLElement | null)?.tagName === 'BUTTON';
    const times = ev.shiftKey ? 10 : 1;
    let handled = true;
    switch (ev.key) {
      case 'ArrowLeft':
        this.nudge(-times, 0);
        break;
      case 'ArrowRight':
        this.nudge(times, 0);
        break;
      case 'ArrowUp':
        this.nudge(0, times);
        break;
      case 'ArrowDown':
        this.nudge(0, -times);
        break;
      case '+':
      case '=':
      case ']':
        this.changeStep(1);
        break;
      case '-':
      case '_':
      case '[':
        this.changeStep(-1);
        break;
      case 'Enter':
        // A focused button does its own job on Enter.
        if (onButton) handled = false;
        else void this.pin();
        break;
      case 'p':
      case 'P':
        void this.pin();
        break;
      case 'u':
      case 'U':
        void this.unpin();
        break;
      case 'n':
      case 'N':
        this.other(ev.shiftKey ? -1 : 1);
        break;
      case 'Escape':
        this.cancel();
        break;
      default:
        handled = false;
    }
    if (handled) {
      ev.preventDefault();
      ev.stopPropagation();
    }
  }

  private show(): void {
    const e = this.editing;
    if (!e) return;
    const step = STEPS_M[this.step]!;
    const b = this.bar;
    b.dataset['zone'] = String(e.zone);
    b.dataset['lon'] = String(e.lon);
    b.dataset['lat'] = String(e.lat);
    b.dataset['stepM'] = String(step);
    b.dataset['fixed'] = e.fixed ? '1' : '0';
    const set = (part: string, text: string): void => {
      const el = b.querySelector<HTMLElement>(`[data-centre-part=${part}]`);
      if (el) el.textContent = text;
    };
    set('title', `Zone ${e.zone} centre · ${e.fixed ? 'pinned' : 'free'}`);
    set('position', `${e.lat.toFixed(5)}, ${e.lon.toFixed(5)}`);
    const moved = e.eastM === 0 && e.northM === 0 ? 'not moved' : `moved ${distance(Math.abs(e.eastM))} ${e.eastM >= 0 ? 'east' : 'west'}, ${distance(Math.abs(e.northM))} ${e.northM >= 0 ? 'north' : 'south'}`;
    set('moved', moved);
    set('step', `Step ${distance(step)}`);
    const unpin = b.querySelector<HTMLButtonElement>('[data-centre-action=unpin]');
    if (unpin) unpin.disabled = !e.fixed;
  }
}
