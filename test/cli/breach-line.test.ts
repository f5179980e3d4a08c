/**
 * The limits line of a missed bound (src/cli/format.ts, breachLine): the amount must show. A
 * band narrower than one stop (demo data, 5 zones, balance 0.01%: every zone's band is
 * 1980.00198..1980.39802 and every zone holds a whole number) is missed by about 0.002, which two
 * decimals printed as "by 0.00". Values below: the mean 9901 / 5 = 1980.2, times 1 - 0.0001.
 */
import { describe, expect, it } from 'vitest';
import { breachLine } from '../../src/cli/format.js';

describe('breachLine', () => {
  it('shows a shortfall under 0.005 with enough decimals', () => {
    const bound = 1980.2 * (1 - 0.0001);
    const line = breachLine({ zone: 4, kind: 'under-demand', bound, by: bound - 1980, load: 1980 });
    expect(line).toBe('zone 4: demand under its minimum 1980.0020 by 0.0020 (has 1980.0000)');
  });

  it('keeps two decimals for ordinary amounts', () => {
    expect(breachLine({ zone: 3, kind: 'over-demand', bound: 1980.4, by: 0.6, load: 1981 })).toBe('zone 3: demand over its maximum 1980.40 by 0.60 (has 1981.00)');
    expect(breachLine({ zone: 2, kind: 'over-stops', bound: 40, by: 1, load: 41 })).toBe('zone 2: stops over their maximum 40.00 by 1.00 (has 41.00)');
  });
});
