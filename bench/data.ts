/**
 * Synthetic clustered stops for the benchmark: towns of very different sizes scattered over a
 * 1500 km x 1100 km region, Gaussian streets around each town, skewed demand. Deterministic.
 */
import { Random } from '../src/util/random.js';
import { unitsFromLonLat } from '../src/geo/unit.js';

export interface BenchStops {
  readonly lonLat: Float64Array;
  readonly units: Float64Array;
  readonly demand: Float64Array;
}

export function clusteredStops(n: number, seed = 7, towns = 400): BenchStops {
  const rng = new Random(seed);
  const t: { lon: number; lat: number; sd: number; cum: number }[] = [];
  let total = 0;
  for (let i = 0; i < towns; i++) {
    total += 1 / (i + 1) ** 0.9;
    t.push({ lon: -5 + rng.next() * 20, lat: 42 + rng.next() * 10, sd: 0.02 + rng.next() * 0.25, cum: total });
  }
  const lonLat = new Float64Array(2 * n);
  const demand = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    const target = rng.next() * total;
    let lo = 0;
    let hi = towns - 1;
    while (lo < hi) {
      const mid = (lo + hi) >> 1;
      if (t[mid]!.cum > target) hi = mid;
      else lo = mid + 1;
    }
    const town = t[lo]!;
    const r = Math.sqrt(-2 * Math.log(1 - rng.next()));
    const a = 2 * Math.PI * rng.next();
    lonLat[2 * i] = town.lon + (town.sd * r * Math.cos(a)) / Math.cos((town.lat * Math.PI) / 180);
    lonLat[2 * i + 1] = town.lat + town.sd * r * Math.sin(a);
    demand[i] = rng.next() < 0.04 ? 8 + Math.floor(rng.next() * 40) : 1 + Math.floor(rng.next() ** 3 * 3);
  }
  return { lonLat, units: unitsFromLonLat(lonLat), demand };
}

/** The same stops as CSV text (id,lat,lon,demand). */
export function* stopsCsv(s: BenchStops): Generator<string> {
  let buf = 'id,lat,lon,demand\n';
  const n = s.demand.length;
  for (let i = 0; i < n; i++) {
    buf += `B${i},${s.lonLat[2 * i + 1]!.toFixed(6)},${s.lonLat[2 * i]!.toFixed(6)},${s.demand[i]}\n`;
    if (buf.length > 1 << 20) {
      yield buf;
      buf = '';
    }
  }
  yield buf;
}
