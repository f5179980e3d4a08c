/**
 * cheapestFirst (src/solve/repair.ts): the repair's selection of the cheapest moves must equal
 * the first entries of a full stable sort by cost (the reference: Array.prototype.sort, stable
 * since ECMAScript 2019, section 23.1.3.30), ties included.
 */
import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { cheapestFirst } from '../../src/solve/repair.js';

describe('cheapestFirst', () => {
  it('equals the first `keep` entries of a stable sort by cost, for any list and keep', () => {
    fc.assert(
      fc.property(
        fc.array(fc.oneof(fc.integer({ min: -5, max: 5 }), fc.double({ min: -1e6, max: 1e6, noNaN: true })), { maxLength: 400 }),
        fc.integer({ min: 1, max: 300 }),
        (costs, keep) => {
          const list = costs.map((cost, id) => ({ cost, id }));
          const expected = [...list].sort((a, b) => a.cost - b.cost).slice(0, keep);
          expect(cheapestFirst(list, keep).map((e) => e.id)).toEqual(expected.map((e) => e.id));
        },
      ),
      { numRuns: 500, seed: 7 },
    );
  });
});
