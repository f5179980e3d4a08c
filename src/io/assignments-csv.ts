import type { Plan } from '../solve/plan.js';
import type { PlanFigures } from '../zones/stats.js';
import type { StopSet } from './stopset.js';
import { csvCell, decimals } from './format.js';

/** Header of the assignments CSV for dispatch systems. */
export const ASSIGNMENT_COLUMNS = ['stop_id', 'zone', 'km_to_centre', 'demand'] as const;

/** The assignments as CSV text chunks (RFC 4180, comma, CRLF-free LF lines, UTF-8). */
export function* assignmentsCsvChunks(stops: StopSet, plan: Plan, figures: PlanFigures): Generator<string> {
  let buffer = `${ASSIGNMENT_COLUMNS.join(',')}\n`;
  const { ids, demand } = stops;
  for (let i = 0; i < ids.length; i++) {
    buffer += `${csvCell(ids[i]!)},${plan.zoneIds[plan.assignment[i]!]},${decimals(figures.stopKm[i]!, 3)},${demand[i]}\n`;
    if (buffer.length > 1 << 20) {
      yield buffer;
      buffer = '';
    }
  }
  yield buffer;
}
