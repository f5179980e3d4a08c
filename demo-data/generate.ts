/**
 * Generates Zoneplan's demo data: an invented scenario, reproducible to the byte.
 *
 *   npx tsx demo-data/generate.ts [out-dir]     (default: demo-data/)
 *
 * 1. tallowmere-stops.csv: one delivery day of "Tallowmere Couriers", a fictional parcel carrier
 *    with 12 vans, in a fictional valley region of invented towns (placed on a real stretch of
 *    land so that the basemap shows ground under it). Clustered towns of very different sizes,
 *    parcels per stop skewed: most homes get 1-2, a few businesses get dozens.
 * 2. sefa-visits.geojson: home-care visits of the fictional "Sefa Islands Care Trust" on islands
 *    on both sides of the 180th meridian; demand is visit minutes. Planar lon/lat clustering
 *    breaks here; spherical k-means must not.
 *
 * No company, town or person in these files exists. Only the generator's own seeded random
 * numbers are used (no Math.random), so the output is the same on every machine.
 */
import { writeFileSync, mkdirSync } from 'node:fs';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { Random } from '../src/util/random.js';

const SYLLABLES_A = ['Tal', 'Vor', 'Ess', 'Mar', 'Kel', 'Bran', 'Ost', 'Fen', 'Hal', 'Ril', 'Dun', 'Car', 'Wen', 'Sel', 'Ambe', 'Grel'];
const SYLLABLES_B = ['low', 'den', 'wick', 'mere', 'holt', 'by', 'stead', 'ford', 'ham', 'ley', 'thorpe', 'combe', 'field', 'gate'];

function townName(rng: Random, used: Set<string>): string {
  for (;;) {
    const name = SYLLABLES_A[rng.nextInt(SYLLABLES_A.length)]! + SYLLABLES_B[rng.nextInt(SYLLABLES_B.length)]!;
    if (!used.has(name)) {
      used.add(name);
      return name;
    }
  }
}

/** Standard normal by Box-Muller from two uniforms. */
function gaussian(rng: Random): number {
  const u = 1 - rng.next();
  const v = rng.next();
  return Math.sqrt(-2 * Math.log(u)) * Math.cos(2 * Math.PI * v);
}

function fixed6(x: number): string {
  return x.toFixed(6);
}

interface Town {
  name: string;
  lon: number;
  lat: number;
  /** Spread of its streets, km. */
  radiusKm: number;
  /** Relative size (share of the stops). */
  size: number;
}

/** The Tallowmere valley: 18 invented towns, sizes following a steep power law. */
export function tallowmereCsv(seed = 20261201): string {
  const rng = new Random(seed);
  const used = new Set<string>();
  const towns: Town[] = [];
  for (let t = 0; t < 18; t++) {
    towns.push({
      name: townName(rng, used),
      lon: 9.3 + rng.next() * 2.6,
      lat: 48.0 + rng.next() * 1.3,
      radiusKm: 1.2 + rng.next() * 4.5,
      size: 1 / (t + 1) ** 1.1,
    });
  }
  const totalSize = towns.reduce((s, t) => s + t.size, 0);
  const stops = 4200;
  const lines = ['stop_id,town,lat,lon,parcels'];
  let id = 1;
  for (const town of towns) {
    const count = Math.max(25, Math.round((town.size / totalSize) * stops));
    for (let i = 0; i < count; i++) {
      const northKm = gaussian(rng) * town.radiusKm;
      const eastKm = gaussian(rng) * town.radiusKm;
      const lat = town.lat + northKm / 111.195;
      const lon = town.lon + eastKm / (111.195 * Math.cos((town.lat * Math.PI) / 180));
      // Homes: 1-3 parcels; about 1 in 25 stops is a business with 8-60.
      const business = rng.next() < 0.04;
      const parcels = business ? 8 + Math.floor(rng.next() ** 2 * 52) : 1 + Math.floor(rng.next() ** 3 * 3);
      lines.push(`TC-${String(id).padStart(5, '0')},${town.name},${fixed6(lat)},${fixed6(lon)},${parcels}`);
      id++;
    }
  }
  return `${lines.join('\n')}\n`;
}

/** The Sefa Islands: visits on islands either side of longitude 180, as GeoJSON. */
export function sefaGeoJson(seed = 20261202): string {
  const rng = new Random(seed);
  // Island centres, east longitudes beyond 180 written as negative (west) longitudes.
  const islands = [
    { name: 'Sefa Levu', lon: 179.35, lat: -16.6, km: 14, visits: 220 },
    { name: 'Motu Ara', lon: 179.85, lat: -16.9, km: 6, visits: 90 },
    { name: 'Lautaveni', lon: -179.9, lat: -16.75, km: 9, visits: 140 },
    { name: 'Niu Koro', lon: -179.55, lat: -17.2, km: 7, visits: 110 },
    { name: 'Vatusefa', lon: 178.9, lat: -17.4, km: 10, visits: 120 },
  ];
  const features: string[] = [];
  let id = 1;
  for (const island of islands) {
    for (let i = 0; i < island.visits; i++) {
      const lat = island.lat + (gaussian(rng) * island.km) / 111.195;
      let lon = island.lon + (gaussian(rng) * island.km) / (111.195 * Math.cos((island.lat * Math.PI) / 180));
      if (lon > 180) lon -= 360;
      if (lon < -180) lon += 360;
      const minutes = [30, 45, 45, 60, 60, 60, 90][rng.nextInt(7)]!;
      features.push(
        `{"type":"Feature","id":"SV-${String(id).padStart(4, '0')}","geometry":{"type":"Point","coordinates":[${fixed6(lon)},${fixed6(lat)}]},"properties":{"island":"${island.name}","minutes":${minutes}}}`,
      );
      id++;
    }
  }
  return `{"type":"FeatureCollection","features":[\n${features.join(',\n')}\n]}\n`;
}

if (process.argv[1] && path.resolve(process.argv[1]) === fileURLToPath(import.meta.url)) {
  const out = process.argv[2] ?? path.dirname(fileURLToPath(import.meta.url));
  mkdirSync(out, { recursive: true });
  writeFileSync(path.join(out, 'tallowmere-stops.csv'), tallowmereCsv());
  writeFileSync(path.join(out, 'sefa-visits.geojson'), sefaGeoJson());
  console.log(`demo data written to ${out}`);
}
