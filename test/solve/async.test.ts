import { describe, expect, it } from 'vitest';
import { solveZones, solveZonesAsync } from '../../src/solve/kmeans.js';
import { solveZonesParallel } from '../../src/run/parallel-solve.js';
import { SolveError, type SolveProgress } from '../../src/solve/types.js';
import { Random } from '../../src/util/random.js';
import { stopsFromLonLat } from './support.js';

function spread(n: number, seed: number): ReturnType<typeof stopsFromLonLat> {
  const r = new Random(seed);
  const pts: [number, number][] = [];
  for (let i = 0; i < n; i++) pts.push([-5 + 15 * r.next(), 42 + 10 * r.next()]);
  return stopsFromLonLat(pts);
}

describe('solveZonesAsync', () => {
  const input = spread(3000, 4);

  it('reports progress with a non-decreasing fraction that ends at 1, and returns the same plan as solveZones', async () => {
    for (const settings of [{ zones: 9, seed: 2 }, { zones: 9, seed: 2, centre: 'mean' as const }, { zones: 9, seed: 2, sampleStops: 400 }]) {
      const events: SolveProgress[] = [];
      const result = await solveZonesAsync(input, settings, { onProgress: (p) => events.push(p), sliceMs: 5 });
      expect(events.length).toBeGreaterThan(settings.zones);
      for (let t = 1; t < events.length; t++) expect(events[t]!.fraction).toBeGreaterThanOrEqual(events[t - 1]!.fraction);
      for (const e of events) {
        expect(e.fraction).toBeGreaterThanOrEqual(0);
        expect(e.fraction).toBeLessThanOrEqual(1);
        expect(e.restarts).toBe(4);
      }
      const last = events[events.length - 1]!;
      expect(last.fraction).toBe(1);
      expect(last.phase).toBe('done');
      expect(last.objectiveKm2).toBe(result.objectiveKm2);
      expect(events.filter((e) => e.phase === 'done').length).toBe(1);
      expect(events[0]!.phase).toBe('seed');
      const sync = solveZones(input, settings);
      expect(result.objectiveKm2).toBe(sync.objectiveKm2);
      expect([...result.assignment]).toEqual([...sync.assignment]);
    }
  });

  it("rejects with SolveError 'cancelled' when aborted after the first progress event", async () => {
    const controller = new AbortController();
    let events = 0;
    const run = solveZonesAsync(input, { zones: 9, seed: 2 }, {
      signal: controller.signal,
      onProgress: () => {
        events++;
        if (events === 1) controller.abort();
      },
    });
    await expect(run).rejects.toBeInstanceOf(SolveError);
    await expect(run).rejects.toMatchObject({ code: 'cancelled', message: expect.stringMatching(/cancelled/) });
    expect(events).toBe(1); // it stopped at the first check, not at the end
  });

  it("rejects at once when the signal is already aborted", async () => {
    const controller = new AbortController();
    controller.abort();
    let events = 0;
    await expect(solveZonesAsync(input, { zones: 3 }, { signal: controller.signal, onProgress: () => events++ })).rejects.toMatchObject({ code: 'cancelled' });
    expect(events).toBe(0);
  });

  it('gives the event loop a turn while it runs, so that a timer can fire mid-solve', async () => {
    const big = spread(8000, 9);
    let ticks = 0;
    const timer = setInterval(() => ticks++, 1);
    let progressAfterTick = false;
    try {
      await solveZonesAsync(big, { zones: 20, seed: 1 }, { sliceMs: 1, onProgress: () => (progressAfterTick ||= ticks > 0) });
    } finally {
      clearInterval(timer);
    }
    expect(progressAfterTick).toBe(true);
  });
});

describe('solveZonesParallel', () => {
  const input = spread(4000, 6);

  it("rejects with SolveError 'cancelled' when aborted after the first progress event, worker threads or not", async () => {
    for (const threads of [1, 2]) {
      const controller = new AbortController();
      let events = 0;
      const run = solveZonesParallel(input, { zones: 12, seed: 3, restarts: 6 }, {
        threads,
        signal: controller.signal,
        onProgress: () => {
          events++;
          if (events === 1) controller.abort();
        },
      });
      await expect(run).rejects.toMatchObject({ name: 'SolveError', code: 'cancelled' });
    }
  });

  it('progress fraction is non-decreasing and ends at 1; the plan is that of solveZones', async () => {
    const fractions: number[] = [];
    const result = await solveZonesParallel(input, { zones: 12, seed: 3 }, { threads: 2, onProgress: (p) => fractions.push(p.fraction) });
    for (let t = 1; t < fractions.length; t++) expect(fractions[t]).toBeGreaterThanOrEqual(fractions[t - 1]!);
    expect(fractions[fractions.length - 1]).toBe(1);
    expect(result.objectiveKm2).toBe(solveZones(input, { zones: 12, seed: 3 }).objectiveKm2);
  });
});
