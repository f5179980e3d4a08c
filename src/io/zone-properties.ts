import type { Plan } from '../solve/plan.js';
import type { ZoneStatistics } from '../zones/report.js';
import { round } from './format.js';

/**
 * Flat GeoJSON properties of a zone (for zone polygons and centres): GIS tools read them as columns.
 * `fixed` says per zone whether its centre is a fixed depot; without it, the plan's first fixedZones are.
 */
export function zoneProperties(plan: Plan, z: ZoneStatistics, fixed?: Uint8Array | null): Record<string, string | number | boolean | null> {
  const r = (x: number | null, places: number): number | null => (x === null || !Number.isFinite(x) ? null : round(x, places));
  return {
    zone: plan.zoneIds[z.zone]!,
    name: plan.zoneNames[z.zone] ?? null,
    fixed: fixed ? fixed[z.zone] === 1 : z.zone < plan.fixedZones,
    stops: z.stops,
    demand: z.demand,
    share: r(z.share, 6),
    capacity: plan.limits && Number.isFinite(plan.limits.bounds.maxDemand[z.zone]!) ? r(plan.limits.bounds.maxDemand[z.zone]!, 6) : null,
    utilisation: r(z.utilisation, 6),
    meanKm: r(z.meanKm, 3),
    medianKm: r(z.medianKm, 3),
    p90Km: r(z.p90Km, 3),
    maxKm: r(z.maxKm, 3),
    rmsKm: r(z.rmsKm, 3),
    areaKm2: r(z.areaKm2, 3),
    compactness: r(z.compactness, 6),
    bboxWest: z.bbox ? r(z.bbox[0], 6) : null,
    bboxSouth: z.bbox ? r(z.bbox[1], 6) : null,
    bboxEast: z.bbox ? r(z.bbox[2], 6) : null,
    bboxNorth: z.bbox ? r(z.bbox[3], 6) : null,
    objectiveKm2: r(z.objectiveKm2, 3),
  };
}
