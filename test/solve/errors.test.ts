import { describe, expect, it } from 'vitest';
import { solveZones, solveZonesAsync } from '../../src/solve/kmeans.js';
import { SolveError, type SolveInput, type SolveSettings } from '../../src/solve/types.js';
import { stopsFromLonLat } from './support.js';

/** Runs a solve and returns the SolveError it throws (fails the test if it throws none or another). */
function solveError(input: SolveInput, settings: SolveSettings): SolveError {
  try {
    solveZones(input, settings);
  } catch (e) {
    expect(e).toBeInstanceOf(SolveError);
    return e as SolveError;
  }
  throw new Error('expected a SolveError, the solve succeeded');
}

const five = stopsFromLonLat([[0, 0], [1, 0], [2, 0], [3, 0], [4, 0]]);

describe('SolveError for impossible settings and data', () => {
  it('K below 1', () => {
    for (const zones of [0, -1, -Infinity]) {
      const e = solveError(five, { zones });
      expect(e.code).toBe('zones');
      expect(e.message).toMatch(/zones must be a whole number of at least 1/);
      expect(e.message).toContain(String(zones));
    }
  });

  it('K not a whole number', () => {
    for (const zones of [2.5, Number.NaN, Infinity]) {
      const e = solveError(five, { zones });
      expect(e.code).toBe('zones');
      expect(e.message).toMatch(/whole number/);
    }
  });

  it('K larger than the number of distinct stop locations, saying how many there are', () => {
    // 7 stops at 3 distinct places
    const input = stopsFromLonLat([[0, 0], [0, 0], [1, 1], [1, 1], [1, 1], [2, 2], [0, 0]]);
    const e = solveError(input, { zones: 4 });
    expect(e.code).toBe('too-few-locations');
    expect(e.message).toContain('4 zones');
    expect(e.message).toMatch(/only 3 distinct locations/);
    expect(e.message).toMatch(/at most 3 zones/);
    // ... and exactly the distinct count is fine
    expect(solveZones(input, { zones: 3 }).zones).toBe(3);
    // singular wording for one location
    const one = solveError(stopsFromLonLat([[5, 5], [5, 5]]), { zones: 2 });
    expect(one.message).toMatch(/only 1 distinct location:/);
    expect(one.message).toMatch(/at most 1 zone$/);
  });

  it('more zones than stops', () => {
    const e = solveError(five, { zones: 6 });
    expect(e.code).toBe('too-few-locations');
    expect(e.message).toMatch(/only 5 distinct locations/);
  });

  it('no stops', () => {
    const e = solveError({ units: new Float64Array(0), demand: new Float64Array(0) }, { zones: 1 });
    expect(e.code).toBe('no-stops');
    expect(e.message).toMatch(/no stops/);
  });

  it('all demand 0', () => {
    const e = solveError(stopsFromLonLat([[0, 0], [1, 1]], [0, 0]), { zones: 1 });
    expect(e.code).toBe('no-demand');
    expect(e.message).toMatch(/every stop has demand 0/);
  });

  it('bad demand values, seeds and other settings', () => {
    expect(solveError(stopsFromLonLat([[0, 0], [1, 1]], [1, -2]), { zones: 1 }).message).toMatch(/demand of stop 1 must be a finite number >= 0, got -2/);
    expect(solveError(stopsFromLonLat([[0, 0], [1, 1]], [Number.NaN, 1]), { zones: 1 }).message).toMatch(/demand of stop 0/);
    expect(solveError(stopsFromLonLat([[0, 0], [1, 1]], [Infinity, 1]), { zones: 1 }).code).toBe('settings');
    expect(solveError(five, { zones: 2, seed: -1 }).code).toBe('settings');
    expect(solveError(five, { zones: 2, seed: 1.5 }).message).toMatch(/seed must be a whole number/);
    expect(solveError(five, { zones: 2, restarts: 0 }).message).toMatch(/restarts/);
    expect(solveError(five, { zones: 2, maxIterations: 0 }).message).toMatch(/maxIterations/);
    expect(solveError(five, { zones: 2, sampleStops: -5 }).message).toMatch(/sampleStops/);
    expect(solveError(five, { zones: 2, centre: 'median' as never }).message).toMatch(/centre must be 'arc' or 'mean'/);
    expect(solveError({ units: new Float64Array(5), demand: new Float64Array(2) }, { zones: 1 }).message).toMatch(/3 numbers per stop/);
  });

  it('the checks come before any work: the async driver rejects the same way', async () => {
    await expect(solveZonesAsync(five, { zones: 0 })).rejects.toMatchObject({ name: 'SolveError', code: 'zones' });
    await expect(solveZonesAsync(stopsFromLonLat([[0, 0]], [0]), { zones: 1 })).rejects.toMatchObject({ code: 'no-demand' });
  });
});
