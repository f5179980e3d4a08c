/** Which column (CSV) or property (GeoJSON) holds what; any of them may be named by the user. */
export interface FieldChoice {
  readonly id?: string;
  readonly lat?: string;
  readonly lon?: string;
  /** The demand column; null: none (every stop counts 1). */
  readonly demand?: string | null;
}

/** Longest stop id accepted: a longer one is a broken file (an unclosed quote, a pasted blob), not an id. Chosen by us. */
export const MAX_ID_LENGTH = 1000;

/** Usual names, compared without case, spaces, underscores or hyphens. */
export const FIELD_NAMES = {
  lat: ['lat', 'latitude', 'y', 'latdeg', 'latitudedeg', 'latwgs84', 'stoplat', 'geolat'],
  lon: ['lon', 'lng', 'long', 'longitude', 'x', 'londeg', 'longitudedeg', 'lonwgs84', 'stoplon', 'stoplng', 'geolon', 'geolng'],
  id: ['id', 'stopid', 'stop', 'siteid', 'site', 'customerid', 'customer', 'code', 'ref', 'reference', 'name', 'key'],
  demand: ['demand', 'weight', 'workload', 'load', 'qty', 'quantity', 'parcels', 'volume', 'units', 'servicetime', 'serviceminutes', 'minutes', 'duration', 'visits', 'count'],
} as const;

export type FieldRole = keyof typeof FIELD_NAMES;

export function normaliseName(s: string): string {
  return s.trim().toLowerCase().replace(/[\s_\-.()[\]]+/g, '');
}

/**
 * Picks the column for a role among `names`: the one the user named (exactly, or by normalised
 * name), else the first usual name present (in the order of the usual-names list). Returns its
 * index, -1 when absent, or a message when the user's choice is missing.
 */
export function pickField(names: readonly string[], role: FieldRole, chosen: string | undefined): number | { missing: string } {
  const normalised = names.map(normaliseName);
  if (chosen !== undefined) {
    const exact = names.indexOf(chosen);
    if (exact >= 0) return exact;
    const loose = normalised.indexOf(normaliseName(chosen));
    if (loose >= 0) return loose;
    return { missing: chosen };
  }
  for (const usual of FIELD_NAMES[role]) {
    const at = normalised.indexOf(usual);
    if (at >= 0) return at;
  }
  return -1;
}
