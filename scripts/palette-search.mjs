// Searches the zone palette (renderer/palette.ts): 12 colours, alternating dark and light in
// CIELAB lightness, whose closest pair is as far apart as possible for normal vision and for
// protan, deutan and tritan vision (culori's simulation after Machado, Oliveira and Fernandes
// 2009, at full severity), by CIEDE2000. Deterministic: a fixed sRGB grid, slots improved in
// turn from the palette given until no slot improves. Run: node scripts/palette-search.mjs
import { realpathSync } from 'node:fs';
import { fileURLToPath } from 'node:url';
import { differenceCiede2000, filterDeficiencyDeuter, filterDeficiencyProt, filterDeficiencyTrit, formatHex, lab65, parse } from 'culori';

const START = ['#1f5fa0', '#f0a830', '#6b2d8c', '#8fd0ea', '#8a3b12', '#f5df4d', '#0e5a55', '#f3a0b8', '#7a4a9a', '#b9e3a0', '#c2410c', '#c9b8f0'];
const de = differenceCiede2000();
const views = [(c) => c, filterDeficiencyProt(1), filterDeficiencyDeuter(1), filterDeficiencyTrit(1)];

/** The smallest CIEDE2000 difference of two colours over the four ways of seeing them. */
export function worstDifference(a, b) {
  const ca = parse(a);
  const cb = parse(b);
  return Math.min(...views.map((f) => de(f(ca), f(cb))));
}

const lightness = (hex) => lab65(parse(hex)).l;
const chroma = (hex) => {
  const c = lab65(parse(hex));
  return Math.hypot(c.a, c.b);
};
/**
 * Zones 1, 3, 5, ... (slots 0, 2, 4, ...) dark at L* 25-50, light slots at L* 60-82 (no black or white: stops must
 * show on the pale basemap and under the dark zone numbers), and colourful (chroma at least 30),
 * so that no zone looks like the grey outlines or the basemap.
 */
const fits = (slot, hex) => {
  const l = lightness(hex);
  return (slot % 2 === 0 ? l >= 25 && l <= 50 : l >= 60 && l <= 82) && chroma(hex) >= 30;
};

/** The basemap's land and ocean (renderer/basemap.ts): stops are drawn on them, so every colour keeps away from them too. */
const BACKGROUND = ['#f4f1ea', '#dfe9f0'];

function minOver(palette, slot, hex) {
  let m = Infinity;
  for (const b of BACKGROUND) m = Math.min(m, worstDifference(hex, b));
  for (let j = 0; j < palette.length; j++) if (j !== slot) m = Math.min(m, worstDifference(hex, palette[j]));
  return m;
}

export function search() {
  const grid = [];
  for (let r = 0; r < 256; r += 17) for (let g = 0; g < 256; g += 17) for (let b = 0; b < 256; b += 17) grid.push(formatHex({ mode: 'rgb', r: r / 255, g: g / 255, b: b / 255 }));
  const palette = [...START];
  for (let round = 0; round < 20; round++) {
    let improved = false;
    for (let slot = 0; slot < palette.length; slot++) {
      let best = palette[slot];
      // A colour given that breaks the slot's bounds is replaced by any that keeps them.
      let bestScore = fits(slot, best) ? minOver(palette, slot, best) : -Infinity;
      for (const hex of grid) {
        if (!fits(slot, hex)) continue;
        const s = minOver(palette, slot, hex);
        if (s > bestScore + 1e-9) [best, bestScore] = [hex, s];
      }
      if (best !== palette[slot]) {
        palette[slot] = best;
        improved = true;
      }
    }
    if (!improved) break;
  }
  return palette;
}

/** Whether node was started with this file (by real path), not importing it. */
function isMain() {
  try {
    return !!process.argv[1] && realpathSync(process.argv[1]) === realpathSync(fileURLToPath(import.meta.url));
  } catch {
    return false;
  }
}

if (isMain()) {
  const p = search();
  let min = Infinity;
  for (let i = 0; i < p.length; i++) for (let j = i + 1; j < p.length; j++) min = Math.min(min, worstDifference(p[i], p[j]));
  console.log(JSON.stringify(p), 'closest pair, worst view, CIEDE2000:', min.toFixed(2));
  console.log(p.map((h) => `${h} L*=${lightness(h).toFixed(0)} C*=${chroma(h).toFixed(0)}`).join('\n'));
}
