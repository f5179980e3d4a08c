/**
 * cheapestIndices (src/solve/repair.ts): the repair's selection of the cheapest moves must equal
 * the first entries of a full stable sort by cost (the reference: Array.prototype.sort, stable
 * since ECMAScript 2019, section 23.1.3.30), ties included, and leave the costs as they were.
 */
import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { cheapestIndices } from '../../src/solve/repair.js';

describe('cheapestIndices', () => {
  it('equals the first `keep` indices of a stable sort by cost, for any costs, count and keep', () => {
    fc.assert(
      fc.property(
        fc.array(fc.oneof(fc.integer({ min: -5, max: 5 }), fc.double({ min: -1e6, max: 1e6, noNaN: true })), { maxLength: 400 }),
        fc.integer({ min: 1, max: 300 }),
        fc.nat(20),
        (values, keep, spare) => {
          // Only the first `count` entries count; what follows (stale scratch) must be ignored.
          const count = values.length;
          const costs = Float64Array.from([...values, ...Array.from({ length: spare }, () => -1e9)]);
          const before = costs.slice();
          const expected = values.map((cost, id) => ({ cost, id })).sort((a, b) => a.cost - b.cost).slice(0, keep);
          expect(Array.from(cheapestIndices(costs, count, keep))).toEqual(expected.map((e) => e.id));
          expect(costs).toEqual(before);
        },
      ),
      { numRuns: 500, seed: 7 },
    );
  });
});
