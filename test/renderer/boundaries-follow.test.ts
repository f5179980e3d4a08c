/** The map's polygons follow the plan: older ones are not drawn over newer, pending ones are fetched when ready. */
import { describe, expect, it } from 'vitest';
import type { BoundariesStamp, PlanView } from '../../src/api/app-types.js';
import { BoundariesFollower, stampOf } from '../../renderer/boundaries-follow.js';

const fc = (plan: string, version: number, boundariesVersion: number, pending: boolean, tag: string) => ({
  type: 'FeatureCollection',
  features: [{ type: 'Feature', geometry: null, properties: { tag } }],
  zoneplan: { plan, version, boundariesVersion, pending } satisfies BoundariesStamp,
});
type Fc = ReturnType<typeof fc>;
const tagOf = (x: unknown): string | null => (x as Fc | null)?.features[0]?.properties.tag ?? null;
const viewOf = (b: Fc): PlanView => ({ boundaries: b, boundariesVersion: b.zoneplan.boundariesVersion, boundariesPending: b.zoneplan.pending, version: b.zoneplan.version }) as unknown as PlanView;

/** A follower whose pauses are steps the test takes, and whose plan answers are the test's. */
function harness(answers: (name: string, asked: number) => Fc | Error) {
  const drawn: (string | null)[] = [];
  const waiting: boolean[] = [];
  const asked: string[] = [];
  let wake: (() => void)[] = [];
  const f = new BoundariesFollower(
    async (name) => {
      asked.push(name);
      const a = answers(name, asked.length);
      if (a instanceof Error) throw a;
      return viewOf(a);
    },
    (x) => drawn.push(tagOf(x)),
    (w) => waiting.push(w),
    () => new Promise<void>((resolve) => wake.push(resolve)),
  );
  /** Ends every pause under way and lets the answers come. */
  const step = async (): Promise<void> => {
    const w = wake;
    wake = [];
    for (const r of w) r();
    for (let i = 0; i < 5; i++) await Promise.resolve();
  };
  return { f, drawn, waiting, asked, step, pauses: () => wake.length };
}

describe('renderer: zone polygons follow the plan', () => {
  it('reads the stamp of a collection, and nothing else', () => {
    expect(stampOf(fc('p', 3, 2, true, 'x'))).toEqual({ plan: 'p', version: 3, boundariesVersion: 2, pending: true });
    for (const x of [null, 7, { type: 'FeatureCollection', features: [] }, { zoneplan: { plan: 'p', version: '3', boundariesVersion: 2, pending: true } }]) expect(stampOf(x)).toBeNull();
  });

  it('draws pending polygons at once, asks again until the newer ones are ready, then draws them', async () => {
    const h = harness((_, n) => (n < 3 ? fc('p', 5, 4, true, 'old') : fc('p', 5, 5, false, 'new')));
    h.f.offer(fc('p', 5, 4, true, 'old'));
    expect(h.drawn).toEqual(['old']);
    expect(h.waiting).toEqual([true]);
    expect(h.f.isWaiting).toBe(true);
    await h.step();
    await h.step();
    expect(h.asked).toEqual(['p', 'p']);
    expect(h.drawn).toEqual(['old']);
    await h.step();
    expect(h.asked).toEqual(['p', 'p', 'p']);
    expect(h.drawn).toEqual(['old', 'new']);
    expect(h.waiting).toEqual([true, false]);
    expect(h.pauses()).toBe(0);
  });

  it('does not draw older polygons of the same plan over newer ones', () => {
    const h = harness(() => new Error('not asked'));
    h.f.offer(fc('p', 6, 6, false, 'six'));
    h.f.offer(fc('p', 6, 4, true, 'four'));
    expect(h.drawn).toEqual(['six']);
    // Another plan's are drawn whatever their number; none clears the map.
    h.f.offer(fc('q', 2, 1, false, 'q'));
    h.f.offer(null);
    expect(h.drawn).toEqual(['six', 'q', null]);
    expect(h.asked).toEqual([]);
  });

  it('follows only the newest: a later offer ends the wait for the earlier one', async () => {
    const h = harness((name) => (name === 'p' ? fc('p', 3, 3, false, 'p3') : fc('q', 9, 9, false, 'q9')));
    h.f.offer(fc('p', 3, 2, true, 'p2'));
    h.f.offer(fc('q', 9, 8, true, 'q8'));
    await h.step();
    expect(h.asked).toEqual(['q']);
    expect(h.drawn).toEqual(['p2', 'q8', 'q9']);
    expect(h.pauses()).toBe(0);
  });

  it('stops waiting when the plan can no longer be read', async () => {
    const h = harness(() => new Error('no plan "p"'));
    h.f.offer(fc('p', 3, 2, true, 'p2'));
    await h.step();
    expect(h.drawn).toEqual(['p2']);
    expect(h.waiting).toEqual([true, false]);
    expect(h.pauses()).toBe(0);
  });
});
