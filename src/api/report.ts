import type { StopSet } from '../io/stopset.js';
import type { CheckReport, InputProblem } from './types.js';
import { lonLatBox } from '../geo/bbox.js';

export { lonLatBox };

export function checkReport(stops: StopSet): CheckReport {
  let total = 0;
  for (let i = 0; i < stops.demand.length; i++) total += stops.demand[i]!;
  return {
    file: stops.source,
    format: stops.format,
    stops: stops.ids.length,
    totalDemand: total,
    fields: stops.fields,
    bbox: lonLatBox(stops.lonLat),
    warnings: stops.warnings.map((w): InputProblem => ({ ...w })),
  };
}
