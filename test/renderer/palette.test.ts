/**
 * The zone palette against colour science outside the project: culori's colour-vision
 * deficiency simulation (Machado, Oliveira and Fernandes 2009) and its CIEDE2000 difference
 * (CIE 142-2001). Every pair of zone colours stays apart for normal, protan, deutan and tritan
 * vision; neighbouring zone numbers alternate dark and light; and the palette is what the
 * committed search script gives.
 */
import { differenceCiede2000, filterDeficiencyDeuter, filterDeficiencyProt, filterDeficiencyTrit, lab65, parse } from 'culori';
import { describe, expect, it } from 'vitest';
import { assignZoneColours, LAND_COLOUR, OCEAN_COLOUR, zoneColour, ZONE_COLOURS } from '../../renderer/palette.js';

const de = differenceCiede2000();
const VIEWS = { normal: (c: ReturnType<typeof parse>) => c, protan: filterDeficiencyProt(1), deutan: filterDeficiencyDeuter(1), tritan: filterDeficiencyTrit(1) };

function difference(view: keyof typeof VIEWS, a: string, b: string): number {
  const f = VIEWS[view] as (c: NonNullable<ReturnType<typeof parse>>) => NonNullable<ReturnType<typeof parse>>;
  return de(f(parse(a)!), f(parse(b)!));
}

describe('zone palette', () => {
  it('keeps every pair of zone colours apart in every view (CIEDE2000 >= 14)', () => {
    // 14: the search's answer is 14.9; a difference of about 10 is commonly taken as clearly
    // distinct for small marks (common practice, no source).
    for (const view of Object.keys(VIEWS) as (keyof typeof VIEWS)[]) {
      for (let i = 0; i < ZONE_COLOURS.length; i++) {
        for (let j = i + 1; j < ZONE_COLOURS.length; j++) {
          expect(difference(view, ZONE_COLOURS[i]!, ZONE_COLOURS[j]!), `${view}: zones ${i + 1} and ${j + 1}`).toBeGreaterThanOrEqual(14);
        }
      }
    }
  });

  it('keeps every zone colour away from the basemap it is drawn on, in every view', () => {
    for (const view of Object.keys(VIEWS) as (keyof typeof VIEWS)[]) {
      for (const c of ZONE_COLOURS) for (const bg of [LAND_COLOUR, OCEAN_COLOUR]) expect(difference(view, c, bg), `${view}: ${c} on ${bg}`).toBeGreaterThanOrEqual(14);
    }
  });

  it('alternates dark and light by zone number (CIELAB L*)', () => {
    ZONE_COLOURS.forEach((c, i) => {
      const l = lab65(parse(c)!).l;
      if (i % 2 === 0) expect(l, c).toBeLessThanOrEqual(50);
      else expect(l, c).toBeGreaterThanOrEqual(60);
    });
  });

  it('is the answer of scripts/palette-search.mjs', async () => {
    // @ts-expect-error: a plain ES module script without type declarations
    const { search } = (await import('../../scripts/palette-search.mjs')) as { search: () => string[] };
    expect(search()).toEqual([...ZONE_COLOURS]);
  }, 30_000);

  it('gives touching zones different colours beyond 12 zones', () => {
    // 40 zones on a grid of 8 x 5 centres, 0.1 degree apart: each zone's 4 grid neighbours differ.
    const zones = Array.from({ length: 40 }, (_, i) => ({ zone: i + 1, centre: [10 + 0.1 * (i % 8), 50 + 0.1 * Math.floor(i / 8)] as [number, number] }));
    assignZoneColours(zones);
    try {
      for (const z of zones) {
        const x = (z.zone - 1) % 8;
        const y = Math.floor((z.zone - 1) / 8);
        for (const [dx, dy] of [[1, 0], [0, 1], [-1, 0], [0, -1]]) {
          const nx = x + dx!;
          const ny = y + dy!;
          if (nx < 0 || nx >= 8 || ny < 0 || ny >= 5) continue;
          expect(zoneColour(z.zone), `zones ${z.zone} and ${ny * 8 + nx + 1}`).not.toBe(zoneColour(ny * 8 + nx + 1));
        }
      }
    } finally {
      assignZoneColours([]);
    }
  });
});
