import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { writeFileAtomic } from '../io/atomic.js';
import { ImportError } from '../io/problems.js';
import { readDepotsFile } from '../io/zone-files.js';
import type { PlanSettingsInput } from './types.js';

/** A depots file the planner chose in the window: its name and text. */
export interface DepotsText {
  readonly name: string;
  readonly text: string;
}

/**
 * Settings whose fixed depots come from a file's text (chosen in the window, e.g. in browser
 * mode where the main side cannot see the planner's files): the text goes to a private temporary
 * file under its own base name (the name keeps its extension, which tells CSV from GeoJSON, and
 * is what the saved plan's settings show), and is read once here, so that a bad depots file
 * throws its ImportError (problems by row and field) before any run starts. `cleanup` removes the
 * temporary file once the run no longer needs it.
 */
export function withDepotsText(request: PlanSettingsInput, depots: DepotsText | undefined): { request: PlanSettingsInput; cleanup: () => void } {
  if (!depots) return { request, cleanup: () => {} };
  const dir = mkdtempSync(path.join(tmpdir(), 'zoneplan-depots-'));
  const cleanup = (): void => rmSync(dir, { recursive: true, force: true });
  try {
    const base = path.basename(depots.name).replace(/[^\w.\- ]/g, '_').replace(/^\.+/, '') || 'depots.csv';
    const file = path.join(dir, base);
    writeFileAtomic(file, [depots.text]);
    readDepotsFile(file);
    return { request: { ...request, depotsFile: file }, cleanup };
  } catch (e) {
    cleanup();
    // Problems name the file as the planner knows it, not the temporary copy.
    if (e instanceof ImportError) {
      const named = (p: (typeof e.problems)[number]) => ({ ...p, file: depots.name, message: p.message.split(p.file).join(depots.name) });
      throw new ImportError(depots.name, e.problems.map(named), e.errorCount, e.warnings.map(named));
    }
    throw e;
  }
}
