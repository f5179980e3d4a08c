import { EARTH_RADIUS_KM } from './constants.js';
import { lonLatFromVector, unitFromLonLat } from './unit.js';

/**
 * Lambert azimuthal equal-area projection of the sphere about a centre, in km
 * (J. P. Snyder, "Map Projections: A Working Manual", USGS Professional Paper 1395, 1987,
 * section 24, spherical formulas 24-2 to 24-4 and inverse 20-14, 24-16). Areas are true, so
 * planar area in projected km^2 is area on the sphere; shapes are close near the centre.
 */
export class LocalProjection {
  /** Unit vectors of the local frame: east, north and up at the centre. */
  private readonly e: [number, number, number];
  private readonly n: [number, number, number];
  private readonly u: [number, number, number];

  constructor(readonly centreLon: number, readonly centreLat: number, readonly radiusKm = EARTH_RADIUS_KM) {
    const u = unitFromLonLat(centreLon, centreLat);
    const lon = (centreLon * Math.PI) / 180;
    const lat = (centreLat * Math.PI) / 180;
    this.u = u;
    this.e = [-Math.sin(lon), Math.cos(lon), 0];
    this.n = [-Math.sin(lat) * Math.cos(lon), -Math.sin(lat) * Math.sin(lon), Math.cos(lat)];
  }

  /** Projects a unit vector; returns [x, y] in km. The antipode of the centre has no image (NaN). */
  forwardUnit(x: number, y: number, z: number): [number, number] {
    const cosc = x * this.u[0] + y * this.u[1] + z * this.u[2];
    if (cosc <= -1 + 1e-15) return [Number.NaN, Number.NaN];
    const k = Math.sqrt(2 / (1 + cosc)) * this.radiusKm;
    return [k * (x * this.e[0] + y * this.e[1] + z * this.e[2]), k * (x * this.n[0] + y * this.n[1] + z * this.n[2])];
  }

  /** Projects a position in degrees; returns [x, y] in km. */
  forward(lon: number, lat: number): [number, number] {
    const [x, y, z] = unitFromLonLat(lon, lat);
    return this.forwardUnit(x, y, z);
  }

  /** Inverse projection of [x, y] in km to a unit vector. */
  inverseUnit(px: number, py: number): [number, number, number] {
    const rho = Math.hypot(px, py) / this.radiusKm;
    if (rho === 0) return [...this.u];
    if (rho > 2) return [Number.NaN, Number.NaN, Number.NaN];
    const c = 2 * Math.asin(rho / 2);
    const sc = Math.sin(c);
    const cc = Math.cos(c);
    const ex = px / this.radiusKm / rho;
    const ny = py / this.radiusKm / rho;
    const out: [number, number, number] = [0, 0, 0];
    for (let i = 0; i < 3; i++) out[i] = cc * this.u[i]! + sc * (ex * this.e[i]! + ny * this.n[i]!);
    return out;
  }

  /** Inverse projection of [x, y] in km to [lon, lat] in degrees. */
  inverse(px: number, py: number): [number, number] {
    const [x, y, z] = this.inverseUnit(px, py);
    return lonLatFromVector(x, y, z);
  }
}
