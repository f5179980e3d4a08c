/**
 * 200 000 stops: the arrays survive a save and a load exactly (no timings asserted here; speed
 * at 1M stops is a benchmark matter).
 */
import { afterAll, describe, expect, it } from 'vitest';
import { createProject, loadPlan, savePlanToProject, getProjectInfo } from '../../src/api/project.js';
import { tempDir } from './support.js';

/** Bit-for-bit equality of two typed arrays (fast at this size, and exact for NaN and -0). */
function sameBits(a: ArrayBufferView, b: ArrayBufferView): boolean {
  return a.constructor === b.constructor && Buffer.from(a.buffer, a.byteOffset, a.byteLength).equals(Buffer.from(b.buffer, b.byteOffset, b.byteLength));
}
import { solvedOf, syntheticPlan, syntheticStops } from './synthetic.js';

const tmp = tempDir('large');
afterAll(() => tmp.cleanup());

describe('200 000 stops', () => {
  it('save and load with every array equal', async () => {
    const file = tmp.file('large.zoneplan');
    await createProject(file);
    const stops = syntheticStops(200_000, 11);
    const plan = syntheticPlan(stops, 40, 11, { locked: true, limits: true });
    await savePlanToProject(file, solvedOf(stops, plan), 'large');
    const loaded = await loadPlan(file, 'large');
    expect(loaded.stops.ids.length).toBe(200_000);
    expect(loaded.stops.ids[199_999]).toBe('S-11-199999');
    expect(loaded.stops.ids.every((id, i) => id === stops.ids[i])).toBe(true);
    expect(sameBits(loaded.stops.lonLat, stops.lonLat)).toBe(true);
    expect(sameBits(loaded.stops.units, stops.units)).toBe(true);
    expect(sameBits(loaded.stops.demand, stops.demand)).toBe(true);
    expect(sameBits(loaded.stops.rows, stops.rows)).toBe(true);
    expect(sameBits(loaded.plan.assignment, plan.assignment)).toBe(true);
    expect(sameBits(loaded.plan.locked!, plan.locked!)).toBe(true);
    expect(sameBits(loaded.plan.centres, plan.centres)).toBe(true);
    expect(sameBits(loaded.figures.stopKm, solvedOf(stops, plan).figures.stopKm)).toBe(true);
    // And the check itself tells a difference.
    const changed = plan.assignment.slice();
    changed[123_456] = (changed[123_456]! + 1) % 40;
    expect(sameBits(loaded.plan.assignment, changed)).toBe(false);
    expect((await getProjectInfo(file)).stopSets).toBe(1);
  });
});
