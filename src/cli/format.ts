import type { InputProblem, LimitBreach, PlanComparison, PlanReport, RebalanceReport, SweepReport, SweepRow, ZoneRow } from '../api/types.js';

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
  const limited = zones.some((z) => z.maxDemand !== null || z.minDemand !== null);
  const named = zones.some((z) => z.name !== null);
  const header = ['zone', ...(named ? ['depot'] : []), 'stops', 'demand', ...(limited ? ['min', 'max', 'use %', ''] : []), 'mean km', 'max km'];
  return table(
    header,
    zones.map((z) => [
      String(z.zone),
      ...(named ? [z.name ?? ''] : []),
      String(z.stops),
      amount(z.demand),
      ...(limited
        ? [
            z.minDemand !== null ? fixed(z.minDemand, 1) : '-',
            z.maxDemand !== null ? fixed(z.maxDemand, 1) : '-',
            z.utilisation !== null ? fixed(z.utilisation * 100, 1) : '-',
            z.breaksLimits ? 'OVER/UNDER' : '',
          ]
        : []),
      fixed(z.meanKm, 2),
      fixed(z.maxKm, 2),
    ]),
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

/**
 * One bound a plan misses, with enough decimals that the amount shows: a band narrower than a
 * whole stop can be missed by less than 0.005 (e.g. "minimum 1980.0020 by 0.0020").
 */
export function breachLine(b: LimitBreach): string {
  const what = b.kind === 'over-demand' ? 'demand over its maximum' : b.kind === 'under-demand' ? 'demand under its minimum' : b.kind === 'over-stops' ? 'stops over their maximum' : 'stops under their minimum';
  const places = b.by > 0 && b.by < 0.005 ? Math.min(8, Math.ceil(-Math.log10(b.by)) + 1) : 2;
  return `zone ${b.zone}: ${what} ${fixed(b.bound, places)} by ${fixed(b.by, places)} (has ${fixed(b.load, places)})`;
}

export function planText(r: PlanReport): string {
  const lines = [
    zoneTable(r.zones),
    '',
    `stops ${r.input.stops}, demand ${amount(r.input.totalDemand)}, zones ${r.zones.length}`,
    `objective ${r.objectiveKm2.toExponential(6)} km² (sum of demand x squared great-circle km to the zone centre)`,
    `${r.converged ? 'converged' : 'NOT converged (iteration cap reached)'} after ${r.iterations} iterations; ${r.restarts > 0 ? `best of ${r.restarts} starts` : 'started from the fixed depots'} (seed ${r.seed})${r.startStops < r.input.stops ? `, starts compared on a sample of ${r.startStops} stops` : ''}`,
  ];
  if (r.fixedZones > 0 || r.lockedStops > 0) lines.push(`${r.fixedZones} zone${r.fixedZones === 1 ? '' : 's'} with a fixed depot, ${r.lockedStops} stop${r.lockedStops === 1 ? '' : 's'} locked to a zone`);
  if (r.limits) {
    const l = r.limits;
    lines.push(
      `limits: ${l.feasible ? 'every zone bound is met' : `${l.breaches.length} bound${l.breaches.length === 1 ? '' : 's'} NOT met`}; ` +
        (l.lowerBoundKm2 !== null && l.gap !== null
          ? `LP lower bound ${l.lowerBoundKm2.toExponential(6)} km², gap ${(l.gap * 100).toFixed(3)}% (${l.split} stop${l.split === 1 ? '' : 's'} split by the LP, rounded)`
          : 'even with stops split between zones the bounds cannot all be met together, so no lower bound applies'),
    );
    for (const b of l.breaches) lines.push(`  ${breachLine(b)}`);
  }
  if (r.files.geojson) lines.push(`plan written to ${r.files.geojson}`);
  if (r.files.assignments) lines.push(`assignments written to ${r.files.assignments}`);
  lines.push(`note: ${r.distanceNote}`);
  return lines.join('\n');
}

export function sweepText(r: SweepReport): string {
  const lines = [
    table(
      ['zones', 'objective km²', 'max/min demand', 'demand CV', 'mean km', 'max km', 'limits', 'gap %'],
      r.rows.map((row) => [
        String(row.zones),
        Number.isFinite(row.objectiveKm2) ? row.objectiveKm2.toExponential(4) : 'no plan',
        Number.isNaN(row.maxMinRatio) ? '-' : Number.isFinite(row.maxMinRatio) ? fixed(row.maxMinRatio, 3) : 'inf',
        fixed(row.demandCv, 4),
        fixed(row.meanKm, 2),
        fixed(row.maxKm, 2),
        row.feasible === null ? '-' : row.feasible ? 'met' : 'NOT met',
        row.gap === null ? '-' : fixed(row.gap * 100, 3),
      ]),
    ),
    ...r.rows.filter((row) => row.note).map((row) => `K=${row.zones}: ${row.note}`),
    '',
    `note: ${r.distanceNote}`,
  ];
  return lines.join('\n');
}

/** The sweep rows as CSV (RFC 4180). */
export function sweepCsv(rows: readonly SweepRow[]): string {
  const head = 'zones,objective_km2,max_min_demand_ratio,demand_cv,mean_km,max_km,limits_met,gap';
  return `${[head, ...rows.map((r) => [r.zones, r.objectiveKm2, r.maxMinRatio, r.demandCv, r.meanKm, r.maxKm, r.feasible ?? '', r.gap ?? ''].join(','))].join('\n')}\n`;
}

export function comparisonText(c: PlanComparison, a: string, b: string, listLimit: number): string {
  const lines = [
    `${a} -> ${b}: ${c.changedStops} of ${c.commonStops} common stops changed zone (demand ${amount(c.changedDemand)})`,
    `objective ${c.objectiveBeforeKm2.toExponential(6)} -> ${c.objectiveAfterKm2.toExponential(6)} km²`,
    '',
    table(
      ['zone', 'stops before', 'stops after', 'demand before', 'demand after'],
      c.zones.map((z) => [String(z.zone), z.stopsBefore === null ? '-' : String(z.stopsBefore), z.stopsAfter === null ? '-' : String(z.stopsAfter), z.demandBefore === null ? '-' : amount(z.demandBefore), z.demandAfter === null ? '-' : amount(z.demandAfter)]),
    ),
  ];
  if (listLimit > 0 && c.changed.length > 0) {
    lines.push('', table(['stop', 'from', 'to', 'demand'], c.changed.slice(0, listLimit).map((x) => [x.id, String(x.from), String(x.to), amount(x.demand)])));
    if (c.changedStops > listLimit) lines.push(`... and ${c.changedStops - listLimit} more (--list N, or --json for all)`);
  }
  return lines.join('\n');
}

export function rebalanceText(r: RebalanceReport, from: string, to: string): string {
  const budget = r.budget ? ('stops' in r.budget ? `budget ${r.budget.stops} stops` : `budget ${(r.budget.demandShare * 100).toFixed(2)}% of demand`) : 'no budget';
  return [
    `stops: ${r.added} new, ${r.removedStops} gone, ${r.demandChanged} with new demand, ${r.positionChanged} moved in place`,
    `rebalanced ${from} -> ${to}: ${r.moved} stop${r.moved === 1 ? '' : 's'} changed zone (demand ${amount(r.movedDemand)}; ${budget})${r.forced > 0 ? `, ${r.forced} more because their zone was removed` : ''}`,
    comparisonText(r.comparison, from, to, 20),
  ].join('\n');
}
