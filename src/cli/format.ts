import type { InputProblem, PlanReport, ZoneRow } from '../api/types.js';

/** Right-aligned text table with a header row. */
export function table(header: readonly string[], rows: readonly (readonly string[])[]): string {
  const widths = header.map((h, c) => Math.max(h.length, ...rows.map((r) => (r[c] ?? '').length)));
  const line = (cells: readonly string[]): string => cells.map((s, c) => s.padStart(widths[c]!)).join('  ');
  return [line(header), widths.map((w) => '-'.repeat(w)).join('  '), ...rows.map(line)].join('\n');
}

export function fixed(x: number, places: number): string {
  return Number.isFinite(x) ? x.toFixed(places) : String(x);
}

/** Shortest clear form of a demand total (integers without decimals). */
export function amount(x: number): string {
  return Number.isInteger(x) ? String(x) : x.toFixed(2);
}

export function zoneTable(zones: readonly ZoneRow[]): string {
  return table(
    ['zone', 'stops', 'demand', 'mean km', 'max km'],
    zones.map((z) => [String(z.zone), String(z.stops), amount(z.demand), fixed(z.meanKm, 2), fixed(z.maxKm, 2)]),
  );
}

export function problemLine(p: InputProblem): string {
  const where: string[] = [];
  if (p.row !== undefined) where.push(`row ${p.row}`);
  if (p.feature !== undefined) where.push(`feature ${p.feature}`);
  if (p.field !== undefined) where.push(`field "${p.field}"`);
  if (p.value !== undefined) where.push(`value "${p.value}"`);
  return `${p.severity}: ${p.file}${where.length ? `: ${where.join(', ')}` : ''}: ${p.message}`;
}

export function planText(r: PlanReport): string {
  const lines = [
    zoneTable(r.zones),
    '',
    `stops ${r.input.stops}, demand ${amount(r.input.totalDemand)}, zones ${r.zones.length}`,
    `objective ${r.objectiveKm2.toExponential(6)} km² (sum of demand x squared great-circle km to the zone centre)`,
    `${r.converged ? 'converged' : 'NOT converged (iteration cap reached)'} after ${r.iterations} iterations; best of ${r.restarts} starts (seed ${r.seed})${r.startStops < r.input.stops ? `, starts compared on a sample of ${r.startStops} stops` : ''}`,
  ];
  if (r.files.geojson) lines.push(`plan written to ${r.files.geojson}`);
  if (r.files.assignments) lines.push(`assignments written to ${r.files.assignments}`);
  lines.push(`note: ${r.distanceNote}`);
  return lines.join('\n');
}
