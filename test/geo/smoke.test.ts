import { describe, expect, it } from 'vitest';
import { distanceKm } from '../../src/geo/distance.js';

describe('smoke', () => {
  it('distance from a point to itself is 0', () => {
    expect(distanceKm(2.35, 48.85, 2.35, 48.85)).toBe(0);
  });
});
