import { statSync } from 'node:fs';
import { writeFileAtomic } from '../io/atomic.js';
import { assignmentsCsvChunks } from '../io/assignments-csv.js';
import { layerGeoJsonChunks, planGeoJsonChunks } from '../io/plan-geojson.js';
import type { ExportRequest, ExportResult } from './app-types.js';
import { planLayers, type SolvedPlan } from './plan-file.js';
import { AppError } from './wire-error.js';

/**
 * Exports one plan (as edited) the way the window asks: the plan GeoJSON, one of its layers, or
 * the assignments CSV; written to `file` atomically (nothing half-written), or returned as text
 * when `file` is null (browser mode downloads it). `name` is the plan's name for messages.
 */
export function exportSolvedPlan(p: SolvedPlan, name: string, kind: ExportRequest['kind'], file: string | null): ExportResult {
  let chunks: Iterable<string>;
  if (kind === 'assignments') chunks = assignmentsCsvChunks(p.stops, p.plan, p.figures);
  else {
    const layers = planLayers(p);
    if (kind === 'zones' && !layers.boundaries) throw new AppError('usage', `the zones of plan "${name}" cannot be drawn: ${layers.notes.join('; ')}`);
    chunks = kind === 'plan' ? planGeoJsonChunks(layers) : layerGeoJsonChunks(layers, kind);
  }
  if (file === null) {
    const content = [...chunks].join('');
    return { file: null, content, bytes: Buffer.byteLength(content) };
  }
  writeFileAtomic(file, chunks);
  return { file, content: null, bytes: statSync(file).size };
}
