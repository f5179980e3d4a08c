import { existsSync, mkdirSync, readFileSync } from 'node:fs';
import path from 'node:path';
import { writeFileAtomic } from '../io/atomic.js';
import type { MapSettings } from './app-types.js';
import { isTileUrl } from './tile-url.js';

/** The file's name in the user's data folder. */
export const MAP_SETTINGS_FILE = 'map-settings.json';

/** No online tiles: the offline outlines that ship with the app. */
export const DEFAULT_MAP_SETTINGS: MapSettings = { tiles: null };


/**
 * The map settings of the app (online tiles and their attribution), kept in a small JSON file in
 * the user's data folder, so that the desktop window and browser mode (whose address changes
 * with its port) share them. Without a file (tests), they are kept for the session only.
 */
export class MapSettingsStore {
  private current: MapSettings | null = null;

  constructor(private readonly file: string | null) {}

  get(): MapSettings {
    this.current ??= this.read();
    return this.current;
  }

  /** Saves the settings (atomically: the file is whole, the old one or the new one). */
  set(s: MapSettings): MapSettings {
    const next: MapSettings = { tiles: s.tiles ? { url: s.tiles.url.trim(), attribution: s.tiles.attribution.trim() } : null };
    if (this.file) {
      mkdirSync(path.dirname(this.file), { recursive: true });
      writeFileAtomic(this.file, `${JSON.stringify(next, null, 2)}\n`);
    }
    this.current = next;
    return next;
  }

  /** The settings in the file; a missing, unreadable or foreign file gives the defaults (and is only replaced on the next save). */
  private read(): MapSettings {
    if (!this.file || !existsSync(this.file)) return DEFAULT_MAP_SETTINGS;
    try {
      const data = JSON.parse(readFileSync(this.file, 'utf8')) as { tiles?: { url?: unknown; attribution?: unknown } | null };
      const t = data.tiles;
      if (t && typeof t.url === 'string' && isTileUrl(t.url) && t.url.length <= 2000) {
        return { tiles: { url: t.url, attribution: typeof t.attribution === 'string' ? t.attribution.slice(0, 500) : '' } };
      }
      return DEFAULT_MAP_SETTINGS;
    } catch {
      return DEFAULT_MAP_SETTINGS;
    }
  }
}
