/**
 * Zone colours: a palette of our own for Zoneplan (not taken from any planning product).
 *
 * How it was chosen: by scripts/palette-search.mjs (deterministic; the test checks that this is
 * its answer). Neighbouring zone numbers alternate in lightness (dark slots at CIELAB L* 25-50,
 * light ones at 60-82), because a lightness difference survives every common colour-vision
 * deficiency and greyscale printing; every colour is colourful (chroma at least 30) and keeps
 * away from the basemap's land and ocean; and among such palettes the search makes the closest
 * pair as far apart as it can for normal, protan, deutan and tritan vision at once (simulated
 * as Machado, Oliveira and Fernandes 2009, at full severity; CIEDE2000 differences). Its closest
 * pair is about 15 apart in the worst of the four views, where the palette before it had two
 * colours 0.9 apart for deutan vision. Beyond 12 zones colours must repeat: `assignZoneColours`
 * then gives each zone the first colour that none of its nearest neighbouring zones has
 * (greedy colouring over centre distance), so that touching zones still differ; the zone number
 * on each centre and in the table tells repeated colours apart.
 */
export const ZONE_COLOURS: readonly string[] = [
  '#447744', // fern
  '#889922', // olive
  '#5500aa', // indigo
  '#bb77dd', // orchid
  '#990033', // claret
  '#00cc99', // mint
  '#4444ff', // cobalt
  '#aadd00', // lime
  '#884477', // mulberry
  '#ff7788', // coral
  '#224400', // moss
  '#ffaaff', // pink
];

/** The offline basemap's sea and land (renderer/basemap.ts): the zone colours keep away from both. */
export const OCEAN_COLOUR = '#dfe9f0';
export const LAND_COLOUR = '#f4f1ea';

/** Palette index per zone label for the open plan (empty: by label order). */
let assigned = new Map<number, number>();

/** The colour of a zone by its 1-based label. */
export function zoneColour(label: number): string {
  const n = ZONE_COLOURS.length;
  const i = assigned.get(label) ?? (((label - 1) % n) + n) % n;
  return ZONE_COLOURS[i] ?? '#555555';
}

/**
 * Chooses the zones' colours for a plan: label order up to 12 zones; beyond that, greedy
 * colouring so that no zone shares a colour with one of its `near` nearest zones (by centre).
 */
export function assignZoneColours(zones: readonly { readonly zone: number; readonly centre: readonly [number, number] }[], near = 6): void {
  assigned = new Map();
  const n = ZONE_COLOURS.length;
  if (zones.length <= n) return;
  const rad = Math.PI / 180;
  const vec = zones.map((z) => {
    const lon = z.centre[0] * rad, lat = z.centre[1] * rad;
    return [Math.cos(lat) * Math.cos(lon), Math.cos(lat) * Math.sin(lon), Math.sin(lat)] as const;
  });
  const chord = (a: number, b: number): number => {
    const p = vec[a]!, q = vec[b]!;
    return (p[0] - q[0]) ** 2 + (p[1] - q[1]) ** 2 + (p[2] - q[2]) ** 2;
  };
  const neighbours = zones.map((_, a) => zones.map((_, b) => b).filter((b) => b !== a).sort((x, y) => chord(a, x) - chord(a, y)).slice(0, near));
  // Neighbourhood is made symmetric: if b is near a, a avoids b's colour and b avoids a's.
  const adj = zones.map(() => new Set<number>());
  neighbours.forEach((ns, a) => ns.forEach((b) => (adj[a]!.add(b), adj[b]!.add(a))));
  const colour = new Array<number>(zones.length).fill(-1);
  for (let a = 0; a < zones.length; a++) {
    const used = new Set([...adj[a]!].map((b) => colour[b]!));
    let c = 0;
    while (c < n && used.has(c)) c++;
    if (c === n) c = a % n; // more neighbours than colours: fall back to label order
    colour[a] = c;
    assigned.set(zones[a]!.zone, c);
  }
}

/** The colour as packed RGBA bytes (little-endian ABGR) for writing into ImageData. */
export function zoneColour32(label: number, alpha = 255): number {
  const hex = zoneColour(label);
  const r = parseInt(hex.slice(1, 3), 16);
  const g = parseInt(hex.slice(3, 5), 16);
  const b = parseInt(hex.slice(5, 7), 16);
  return ((alpha << 24) | (b << 16) | (g << 8) | r) >>> 0;
}
