import { LatestDrawings, type BoundariesWorkerFactory } from '../run/boundaries-run.js';
import { boundariesGeoJson } from './boundaries-json.js';
import type { EditedPlan } from './edited-plan.js';

/** Zone polygons as drawn for one state of a plan (0: the plan as solved). */
export interface Drawn {
  readonly geojson: unknown;
  readonly notes: string[];
  readonly version: number;
}

/** One state of a plan as the session holds it: the plan with its edits, its number, its polygons once drawn. */
export interface PlanState {
  readonly plan: EditedPlan;
  readonly version: number;
  boundaries?: Drawn;
}

/**
 * The zone polygons of the plans a window shows, following manual edits. Small plans are drawn at
 * once; larger ones (drawing 100,000 stops takes about a second, a million several) in a worker
 * thread, one state per plan at a time (a newer state stops the drawing of the older), while the
 * newest polygons drawn before stand in for them.
 */
export class ZoneDrawings {
  /** The newest polygons drawn per plan, shown while a later state is being drawn. */
  private readonly newest = new Map<string, Drawn>();
  private readonly drawings: LatestDrawings;

  constructor(
    factory: BoundariesWorkerFactory | undefined,
    /** Plans up to this many stops are drawn at once, on this thread. */
    private readonly drawAtOnceUpTo = 20_000,
  ) {
    this.drawings = new LatestDrawings(factory);
  }

  /** The polygons of state `s` of plan `key`; or, while they are being drawn, the newest drawn before (pending). */
  of(key: string, s: PlanState): { drawn: Drawn; pending: boolean } {
    if (s.boundaries) return { drawn: s.boundaries, pending: false };
    const p = s.plan;
    if (p.edits === 0) s.boundaries = { geojson: p.loaded.boundaries ?? null, notes: [], version: s.version };
    else if (p.stops.ids.length <= this.drawAtOnceUpTo) s.boundaries = { ...boundariesGeoJson(p), version: s.version };
    if (s.boundaries) {
      this.newest.set(key, s.boundaries);
      return { drawn: s.boundaries, pending: false };
    }
    const before = this.newest.get(key) ?? { geojson: p.loaded.boundaries ?? null, notes: [], version: 0 };
    this.drawings.draw(key, s.version, p, (o) => {
      if (o.state === 'done') {
        s.boundaries = { ...o.value, version: s.version };
        if ((this.newest.get(key)?.version ?? -1) < s.version) this.newest.set(key, s.boundaries);
      } else {
        const why = o.state === 'failed' ? o.error.message : 'stopped';
        s.boundaries = { ...before, notes: [`the zone polygons show an earlier state of the plan: redrawing them after the edits failed (${why})`] };
      }
    });
    // The notes of the earlier polygons (stops outside their zone) are not those of this state.
    return { drawn: { ...before, notes: [] }, pending: true };
  }

  /** A plan renamed: its polygons go with it, a drawing under way is stopped (the next view starts it again). */
  rename(from: string, to: string): void {
    void this.drawings.cancel(from);
    const drawn = this.newest.get(from);
    this.newest.delete(from);
    if (drawn) this.newest.set(to, drawn);
  }

  /** Stops every drawing and forgets every plan (another project). */
  async clear(): Promise<void> {
    this.newest.clear();
    await this.drawings.cancelAll();
  }
}
