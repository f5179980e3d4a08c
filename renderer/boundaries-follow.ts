/**
 * Keeps the map's zone polygons with the plan as it is now. Polygons come stamped with the state
 * of the plan they show (BoundariesStamp, the collection's "zoneplan" member): polygons older than
 * those on the map are not drawn over them, and while the main side is still drawing the newest
 * (a large plan after an edit) the plan is asked for again, with growing pauses, until they are
 * there. Only the newest state is followed: anything offered later ends the wait.
 */
import type { BoundariesStamp, PlanView } from '../src/api/app-types.js';

export function stampOf(fc: unknown): BoundariesStamp | null {
  if (!fc || typeof fc !== 'object') return null;
  const s = (fc as { zoneplan?: unknown }).zoneplan;
  if (!s || typeof s !== 'object') return null;
  const { plan, version, boundariesVersion, pending } = s as Record<string, unknown>;
  if (typeof plan !== 'string' || typeof version !== 'number' || typeof boundariesVersion !== 'number' || typeof pending !== 'boolean') return null;
  return { plan, version, boundariesVersion, pending };
}

/** Pauses between asking again: short first (most plans take about a second), at most 2 s. */
const FIRST_PAUSE_MS = 250;
const MAX_PAUSE_MS = 2000;

export class BoundariesFollower {
  /** The plan and state whose polygons are on the map. */
  private shown: { plan: string; version: number } | null = null;
  /** Grows with every offer: a wait that sees another number has been overtaken. */
  private ticket = 0;
  private waiting = false;

  constructor(
    private readonly planView: (name: string) => Promise<PlanView>,
    /** Draws polygons (null: none) with what they show. */
    private readonly draw: (fc: unknown | null, stamp: BoundariesStamp | null) => void,
    /** Hears when waiting for newer polygons starts and ends. */
    private readonly onWaiting: (waiting: boolean) => void = () => {},
    private readonly pause: (ms: number) => Promise<void> = (ms) => new Promise((resolve) => setTimeout(resolve, ms)),
  ) {}

  /** Newer polygons are on the way and being waited for. */
  get isWaiting(): boolean {
    return this.waiting;
  }

  /** Polygons the window shows: drawn unless older than those on the map; waited for while pending. */
  offer(fc: unknown | null): void {
    const ticket = ++this.ticket;
    const s = stampOf(fc);
    if (!s) {
      this.shown = null;
      this.setWaiting(false);
      this.draw(fc, null);
      return;
    }
    const shown = this.shown;
    const same = shown !== null && shown.plan === s.plan;
    if (!(same && shown.version > s.boundariesVersion)) {
      this.shown = { plan: s.plan, version: s.boundariesVersion };
      this.draw(fc, s);
    }
    if (s.pending && !(same && shown.version >= s.version)) void this.follow(s.plan, ticket);
    else this.setWaiting(false);
  }

  private setWaiting(w: boolean): void {
    if (this.waiting === w) return;
    this.waiting = w;
    this.onWaiting(w);
  }

  private async follow(plan: string, ticket: number): Promise<void> {
    this.setWaiting(true);
    for (let pause = FIRST_PAUSE_MS; ; pause = Math.min(MAX_PAUSE_MS, pause * 1.5)) {
      await this.pause(pause);
      if (ticket !== this.ticket) return;
      let view: PlanView;
      try {
        view = await this.planView(plan);
      } catch {
        // The plan is gone (renamed, another project open): the window shows what it opens next.
        if (ticket === this.ticket) this.setWaiting(false);
        return;
      }
      if (ticket !== this.ticket) return;
      if (view.boundariesPending) continue;
      const shown = this.shown;
      if (!(shown && shown.plan === plan && shown.version >= view.boundariesVersion)) {
        this.shown = { plan, version: view.boundariesVersion };
        this.draw(view.boundaries, stampOf(view.boundaries));
      }
      this.setWaiting(false);
      return;
    }
  }
}
